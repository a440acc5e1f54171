/** GET /api/studies/:id/runs — any signed-in user: the study's runs, newest first, each compared with the previous run of its design. */
import { studyIdParamSchema } from '#shared/schemas/studies'
import { listRuns } from '../../../../services/studies/runs'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(studyIdParamSchema, 'path'))
  const { study } = await requireStudy(event, id, 'read')
  return listRuns(study.id)
})
