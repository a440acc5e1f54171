/** POST /api/invitations — admin: invite someone by e-mail with a role; mails them a set-password link (201). */
import { invitationCreateSchema } from '#shared/schemas/users'
import { createInvitation } from '../../services/invitations'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const body = await readValidatedBody(event, check(invitationCreateSchema))
  const invitation = await createInvitation(admin, body)
  setResponseStatus(event, 201)
  return invitation
})
