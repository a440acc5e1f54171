/**
 * GET /api/studies/:id/trends — any signed-in user: treated against pool mean (levels and
 * indexed), the gap, every donor's series, intervention marks, the event study with its
 * lead test and plain-language reading, and warnings. ?from=-8&to=12 sets the event window
 * (periods from the start; ends binned); without them the window follows the data.
 */
import { studyIdParamSchema } from '#shared/schemas/studies'
import { trendsQuerySchema } from '#shared/schemas/trends'
import { studyTrends } from '../../../services/studies/trends'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(studyIdParamSchema, 'path'))
  const { study } = await requireStudy(event, id, 'read')
  const query = await getValidatedQuery(event, check(trendsQuerySchema, 'query'))
  return studyTrends(study, query.from !== undefined && query.to !== undefined ? { from: query.from, to: query.to } : undefined)
})
