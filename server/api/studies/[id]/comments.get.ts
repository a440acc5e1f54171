/** GET /api/studies/:id/comments — any signed-in user: {comments, steps} (review steps from the audit log), oldest first. */
import { idParamSchema } from '#shared/schemas/users'
import { listThread } from '../../../services/review'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(idParamSchema, 'path'))
  await requireStudy(event, id, 'read')
  return listThread(id)
})
