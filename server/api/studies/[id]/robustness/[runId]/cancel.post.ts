/**
 * POST /api/studies/:id/robustness/:runId/cancel — the owner or an admin: stop a queued or
 * running robustness check (its job stops before the next unit). Returns the check; 404 when
 * the study has no such check, 409 when it has already ended.
 */
import { robustnessParamSchema } from '#shared/schemas/robustness'
import { cancelRobustness } from '../../../../../services/robustness/runs'

export default defineEventHandler(async (event) => {
  const { id, runId } = await getValidatedRouterParams(event, check(robustnessParamSchema, 'path'))
  const { user, study } = await requireStudy(event, id, 'write')
  return cancelRobustness(study.id, runId, user.id)
})
