/**
 * POST /api/studies/:id/robustness {runId?, kinds?, options?} — the owner or an admin: queue
 * the robustness checks (placebo in time, placebo in space, leave one donor out, alternative
 * pools) of a run (the newest unless runId names one), one background job each. Returns the
 * new checks (202), queued. Running again is posting again. 400 without a run or for checks
 * the run's design cannot have; 409 on a locked study.
 */
import { studyIdParamSchema } from '#shared/schemas/studies'
import { robustnessStartSchema } from '#shared/schemas/robustness'
import { startRobustness } from '../../../../services/robustness/runs'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(studyIdParamSchema, 'path'))
  const { user, study } = await requireStudy(event, id, 'write')
  const body = await readValidatedBody(event, check(robustnessStartSchema))
  const checks = await startRobustness(study, user.id, body)
  setResponseStatus(event, 202)
  return checks
})
