/**
 * GET /api/studies/:id/runs/:runId/gaps — any signed-in user who may read the study: the run's
 * gap paths with every placebo unit's (stored apart from the result; the gap-paths chart asks
 * for them). 404 when the run has none.
 */
import { runParamSchema } from '#shared/schemas/studies'
import { getRunGapPaths } from '../../../../../services/studies/runs'

export default defineEventHandler(async (event) => {
  const { id, runId } = await getValidatedRouterParams(event, check(runParamSchema, 'path'))
  const { study } = await requireStudy(event, id, 'read')
  return getRunGapPaths(study.id, runId)
})
