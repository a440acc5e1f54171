/**
 * GET /api/studies/:id/runs/:runId/workbook — any signed-in user who may read the study:
 * the run's estimates workbook (.xlsx) as a download.
 */
import { runParamSchema } from '#shared/schemas/studies'
import { runWorkbook } from '../../../../../services/workbook/load'

export default defineEventHandler(async (event) => {
  const { id, runId } = await getValidatedRouterParams(event, check(runParamSchema, 'path'))
  const { user } = await requireStudy(event, id, 'read')
  const { buffer, fileName } = await runWorkbook(id, runId, user)
  audit(useDb(), { userId: user.id, action: 'export.workbook', entity: 'study_run', entityId: runId, after: { studyId: id, fileName } }).catch(() => {})
  setResponseHeaders(event, {
    'content-type': 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
    'content-disposition': `attachment; filename="${fileName}"`,
    'cache-control': 'no-store',
  })
  return buffer
})
