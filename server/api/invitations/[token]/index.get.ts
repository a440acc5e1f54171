/** GET /api/invitations/:token — public: what an invitation link is for, so the page can greet the invitee. */
import { tokenParamSchema } from '#shared/schemas/users'
import { invitationByToken } from '../../../services/invitations'

export default defineEventHandler(async (event) => {
  const { token } = await getValidatedRouterParams(event, check(tokenParamSchema, 'path'))
  return invitationByToken(token)
})
