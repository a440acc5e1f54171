/** GET /api/users — admin: every account with role and status. */
import { listUsers } from '../../services/users'

export default defineEventHandler(async (event) => {
  await requireUser(event, ADMIN)
  return listUsers()
})
