/** PATCH /api/users/:id — admin: change name, role, or deactivate/reactivate. An admin cannot lock themself out. */
import { idParamSchema, userPatchSchema } from '#shared/schemas/users'
import { updateUser } from '../../services/users'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const { id } = await getValidatedRouterParams(event, check(idParamSchema, 'path'))
  const body = await readValidatedBody(event, check(userPatchSchema))
  return updateUser(admin, id, body)
})
