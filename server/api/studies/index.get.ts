/** GET /api/studies?status=&mine=1&owner=&outcome= — any signed-in user: the studies matching every filter given (status, own, owner id, outcome key), with status, owner, outcome and last run. */
import { studyListQuerySchema } from '#shared/schemas/studies'
import { listStudies } from '../../services/studies/studies'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const query = await getValidatedQuery(event, check(studyListQuerySchema, 'query'))
  return listStudies(query, user)
})
