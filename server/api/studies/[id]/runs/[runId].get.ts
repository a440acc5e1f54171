/** GET /api/studies/:id/runs/:runId — any signed-in user: one run with its spec, fingerprint, releases, result and comparison. */
import { runParamSchema } from '#shared/schemas/studies'
import { getRun } from '../../../../services/studies/runs'

export default defineEventHandler(async (event) => {
  const { id, runId } = await getValidatedRouterParams(event, check(runParamSchema, 'path'))
  const { study } = await requireStudy(event, id, 'read')
  return getRun(study.id, runId)
})
