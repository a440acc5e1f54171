/**
 * GET /api/studies/:id/workbook — any signed-in user who may read the study: the study
 * workbook (.xlsx) as a download: every stored run (summary and coefficients), the pool as
 * decided now and the validity record.
 */
import { studyIdParamSchema } from '#shared/schemas/studies'
import { studyWorkbook } from '../../../services/workbook/studyBookLoad'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(studyIdParamSchema, 'path'))
  const { user, study } = await requireStudy(event, id, 'read')
  const { buffer, fileName, runs } = await studyWorkbook(study, user)
  audit(useDb(), { userId: user.id, action: 'export.study_workbook', entity: 'study', entityId: id, after: { fileName, runs } }).catch(() => {})
  setResponseHeaders(event, {
    'content-type': 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
    'content-disposition': `attachment; filename="${fileName}"`,
    'cache-control': 'no-store',
  })
  return buffer
})
