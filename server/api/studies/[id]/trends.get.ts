/**
 * GET /api/studies/:id/trends — any signed-in user: treated against pool mean (levels and
 * indexed), the gap, every donor's series, intervention marks, the event study with its
 * lead test and plain-language reading, and warnings.
 */
import { studyIdParamSchema } from '#shared/schemas/studies'
import { studyTrends } from '../../../services/studies/trends'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(studyIdParamSchema, 'path'))
  const { study } = await requireStudy(event, id, 'read')
  return studyTrends(study)
})
