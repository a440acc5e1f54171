/**
 * GET /api/studies/:id/runs/:runId/report — any signed-in user who may read the study: what
 * the printable report shows (study, result, treated and comparison series from the run's
 * exact rows, validity record, releases, cautions).
 */
import { runParamSchema } from '#shared/schemas/studies'
import { runReport } from '../../../../../services/workbook/report'

export default defineEventHandler(async (event) => {
  const { id, runId } = await getValidatedRouterParams(event, check(runParamSchema, 'path'))
  const { user } = await requireStudy(event, id, 'read')
  return runReport(id, runId, user)
})
