/** POST /api/invitations — admin: invite someone by e-mail with a role; mails them a set-password link. */
import { eq } from 'drizzle-orm'
import { invitations, users } from '~~/db/schema'
import { invitationCreateSchema } from '#shared/schemas/users'
import { INVITATION_TTL_HOURS, invitationMail, newToken } from '../../services/invitations'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const body = await readValidatedBody(event, check(invitationCreateSchema))
  const db = useDb()
  const [existing] = await db.select({ id: users.id }).from(users).where(eq(users.email, body.email))
  if (existing) throw createError({ statusCode: 409, message: `An account for ${body.email} already exists.` })
  const { token, tokenHash } = newToken()
  const expiresAt = new Date(Date.now() + INVITATION_TTL_HOURS * 3600_000)
  const invitation = await db.transaction(async (tx) => {
    const [row] = await tx.insert(invitations).values({ ...body, tokenHash, expiresAt, invitedBy: admin.id })
      .returning({ id: invitations.id, email: invitations.email, name: invitations.name, role: invitations.role, expiresAt: invitations.expiresAt })
    await audit(tx, { userId: admin.id, action: 'invite', entity: 'invitation', entityId: row!.id, after: row })
    return row!
  })
  const link = `${publicOrigin()}/invite/${token}`
  const mail = await sendMail({ to: body.email, ...invitationMail(body.name, body.role, link) })
  setResponseStatus(event, 201)
  return { ...invitation, mailSent: mail.sent, mailError: mail.error ?? null }
})
