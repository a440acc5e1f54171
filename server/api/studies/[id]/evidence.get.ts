/**
 * GET /api/studies/:id/evidence — any signed-in user (every reader of the study): computed
 * evidence on each threat to validity, with a verdict in plain words, the figure behind it,
 * one line of explanation, the rule, and where its chart is. 404 for an unknown study.
 */
import { studyIdParamSchema } from '#shared/schemas/studies'
import { studyEvidence } from '../../../services/validity/evidence'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(studyIdParamSchema, 'path'))
  const { study } = await requireStudy(event, id, 'read')
  return studyEvidence(study)
})
