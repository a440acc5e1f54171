/** GET /api/users — admin: every account with role and status. */
import { asc } from 'drizzle-orm'
import { users } from '~~/db/schema'

export default defineEventHandler(async (event) => {
  await requireUser(event, ADMIN)
  return useDb()
    .select({ id: users.id, email: users.email, name: users.name, role: users.role, active: users.active, createdAt: users.createdAt })
    .from(users)
    .orderBy(asc(users.email))
})
