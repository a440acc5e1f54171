/**
 * Invitations: an admin invites someone by e-mail with a role; the invitee follows the mailed
 * link once to set a password, which creates the account. Tokens are random, stored only as a
 * SHA-256 hash, valid for INVITATION_TTL_HOURS.
 */
import { createHash, randomBytes } from 'node:crypto'
import bcrypt from 'bcryptjs'
import { and, desc, eq, isNull } from 'drizzle-orm'
import type { z } from 'zod'
import { invitations, users } from '~~/db/schema'
import type { invitationCreateSchema } from '#shared/schemas/users'
import type { SessionUser } from '../utils/auth'
import { refuseTakenEmail } from './users'

type InvitationCreate = z.output<typeof invitationCreateSchema>

export const INVITATION_TTL_HOURS = 72

export function newToken(): { token: string, tokenHash: string } {
  const token = randomBytes(24).toString('base64url')
  return { token, tokenHash: hashToken(token) }
}

export function hashToken(token: string): string {
  return createHash('sha256').update(token).digest('hex')
}

export function invitationMail(name: string, role: string, link: string) {
  return {
    subject: 'Your Counterpart account is ready to set up',
    text: [
      `Hello ${name},`,
      '',
      `You have been invited to Counterpart as ${/^[aeiou]/.test(role) ? 'an' : 'a'} ${role}.`,
      'Choose your password here (the link works once and expires in 72 hours):',
      '',
      link,
      '',
      'If you were not expecting this, ignore this message.',
    ].join('\n'),
  }
}

const stateOf = (r: { acceptedAt: Date | null, expiresAt: Date }, now = Date.now()) =>
  r.acceptedAt ? 'accepted' as const : r.expiresAt.getTime() < now ? 'expired' as const : 'pending' as const

/** The latest 200 invitations with their state (pending, accepted, expired). */
export async function listInvitations() {
  const rows = await useDb().select({
    id: invitations.id, email: invitations.email, name: invitations.name, role: invitations.role,
    expiresAt: invitations.expiresAt, acceptedAt: invitations.acceptedAt, createdAt: invitations.createdAt,
  }).from(invitations).orderBy(desc(invitations.createdAt)).limit(200)
  const now = Date.now()
  return rows.map(r => ({ ...r, state: stateOf(r, now) }))
}

/** Stores the invitation (audited), then mails the link; says whether the mail went. 409 if the address has an account. */
export async function createInvitation(admin: SessionUser, body: InvitationCreate) {
  await refuseTakenEmail(body.email)
  const { token, tokenHash } = newToken()
  const expiresAt = new Date(Date.now() + INVITATION_TTL_HOURS * 3600_000)
  const invitation = await useDb().transaction(async (tx) => {
    const [row] = await tx.insert(invitations).values({ ...body, tokenHash, expiresAt, invitedBy: admin.id })
      .returning({ id: invitations.id, email: invitations.email, name: invitations.name, role: invitations.role, expiresAt: invitations.expiresAt })
    await audit(tx, { userId: admin.id, action: 'invite', entity: 'invitation', entityId: row!.id, after: row })
    return row!
  })
  const link = `${publicOrigin()}/invite/${token}`
  const mail = await sendMail({ to: body.email, ...invitationMail(body.name, body.role, link) })
  return { ...invitation, mailSent: mail.sent, mailError: mail.error ?? null }
}

/** What an invitation link is for, so the page can greet the invitee; 404 for an unknown token. */
export async function invitationByToken(token: string) {
  const [row] = await useDb().select().from(invitations).where(eq(invitations.tokenHash, hashToken(token)))
  if (!row) throw createError({ statusCode: 404, message: 'This invitation link is not valid.' })
  return { email: row.email, name: row.name, role: row.role, state: stateOf(row) }
}

/**
 * Sets the invitee's password and creates the account, once: 404 for an unknown or used link,
 * 410 once expired, 409 if the address has an account by now.
 */
export async function acceptInvitation(token: string, password: string) {
  const passwordHash = await bcrypt.hash(password, 10)
  return useDb().transaction(async (tx) => {
    const [inv] = await tx.select().from(invitations)
      .where(and(eq(invitations.tokenHash, hashToken(token)), isNull(invitations.acceptedAt))).for('update')
    if (!inv) throw createError({ statusCode: 404, message: 'This invitation link is not valid or has already been used.' })
    if (inv.expiresAt.getTime() < Date.now()) {
      throw createError({ statusCode: 410, message: 'This invitation has expired. Ask an administrator for a new one.' })
    }
    const [taken] = await tx.select({ id: users.id }).from(users).where(eq(users.email, inv.email))
    if (taken) throw createError({ statusCode: 409, message: `An account for ${inv.email} already exists.` })
    const [user] = await tx.insert(users).values({ email: inv.email, name: inv.name, role: inv.role, passwordHash })
      .returning({ id: users.id, email: users.email, name: users.name, role: users.role })
    await tx.update(invitations).set({ acceptedAt: new Date() }).where(eq(invitations.id, inv.id))
    await audit(tx, { userId: user!.id, action: 'accept', entity: 'invitation', entityId: inv.id, after: user })
    return user!
  })
}
