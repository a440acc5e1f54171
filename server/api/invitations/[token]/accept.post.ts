/** POST /api/invitations/:token/accept — public: sets the invitee's password and creates the account. */
import bcrypt from 'bcryptjs'
import { and, eq, isNull } from 'drizzle-orm'
import { invitations, users } from '~~/db/schema'
import { invitationAcceptSchema, tokenParamSchema } from '#shared/schemas/users'
import { hashToken } from '../../../services/invitations'

export default defineEventHandler(async (event) => {
  const { token } = await getValidatedRouterParams(event, check(tokenParamSchema, 'path'))
  const { password } = await readValidatedBody(event, check(invitationAcceptSchema))
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
    return user
  })
})
