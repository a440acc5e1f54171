/** GET /api/studies/:id/robustness — any signed-in user: the study's robustness checks, newest first, with status, progress, spec, fingerprint and results. */
import { studyIdParamSchema } from '#shared/schemas/studies'
import { listRobustness } from '../../../../services/robustness/runs'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(studyIdParamSchema, 'path'))
  const { study } = await requireStudy(event, id, 'read')
  return listRobustness(study.id)
})
