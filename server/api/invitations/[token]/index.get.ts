/** GET /api/invitations/:token — public: what an invitation link is for, so the page can greet the invitee. */
import { eq } from 'drizzle-orm'
import { invitations } from '~~/db/schema'
import { tokenParamSchema } from '#shared/schemas/users'
import { hashToken } from '../../../services/invitations'

export default defineEventHandler(async (event) => {
  const { token } = await getValidatedRouterParams(event, check(tokenParamSchema, 'path'))
  const [row] = await useDb().select().from(invitations).where(eq(invitations.tokenHash, hashToken(token)))
  if (!row) throw createError({ statusCode: 404, message: 'This invitation link is not valid.' })
  const state = row.acceptedAt ? 'accepted' : row.expiresAt.getTime() < Date.now() ? 'expired' : 'pending'
  return { email: row.email, name: row.name, role: row.role, state }
})
