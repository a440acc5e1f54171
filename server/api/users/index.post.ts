/** POST /api/users — admin: create an account with a password. Returns the new user (201). */
import { userCreateSchema } from '#shared/schemas/users'
import { createUser } from '../../services/users'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const body = await readValidatedBody(event, check(userCreateSchema))
  const user = await createUser(admin, body)
  setResponseStatus(event, 201)
  return user
})
