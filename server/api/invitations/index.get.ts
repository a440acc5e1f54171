/** GET /api/invitations — admin: invitations with their state (pending, accepted, expired). */
import { listInvitations } from '../../services/invitations'

export default defineEventHandler(async (event) => {
  await requireUser(event, ADMIN)
  return listInvitations()
})
