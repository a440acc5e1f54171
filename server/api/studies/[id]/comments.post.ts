/** POST /api/studies/:id/comments — any signed-in user (reviewers too), {body}: adds a comment; 201 with it. */
import { idParamSchema } from '#shared/schemas/users'
import { commentCreateSchema } from '#shared/schemas/review'
import { addComment } from '../../../services/review'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(idParamSchema, 'path'))
  const { user } = await requireStudy(event, id, 'read')
  const { body } = await readValidatedBody(event, check(commentCreateSchema))
  setResponseStatus(event, 201)
  return addComment(user, id, body)
})
