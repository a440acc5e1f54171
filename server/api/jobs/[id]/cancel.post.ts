/**
 * POST /api/jobs/:id/cancel — the job's creator or an admin: cancels a queued job at once or
 * asks a running one to stop (it ends "cancelled" at its next progress report). Returns
 * {id, kind, state, message}; 404 for a job that is not the caller's, 409 when it has finished.
 */
import { jobParamSchema } from '#shared/schemas/uploads'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, check(jobParamSchema, 'path'))
  return await cancelJob(user, id)
})
