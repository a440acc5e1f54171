/** POST /api/invitations/:token/accept — public: sets the invitee's password and creates the account. */
import { invitationAcceptSchema, tokenParamSchema } from '#shared/schemas/users'
import { acceptInvitation } from '../../../services/invitations'

export default defineEventHandler(async (event) => {
  const { token } = await getValidatedRouterParams(event, check(tokenParamSchema, 'path'))
  const { password } = await readValidatedBody(event, check(invitationAcceptSchema))
  return acceptInvitation(token, password)
})
