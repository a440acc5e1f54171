/**
 * GET /api/jobs/:id — the job's creator or an admin: {id, kind, state (queued, running, done, failed,
 * cancelled), progress 0..1, message, result, cancelRequested}.
 */
import { eq } from 'drizzle-orm'
import { jobs } from '~~/db/schema'
import { jobParamSchema } from '#shared/schemas/uploads'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, check(jobParamSchema, 'path'))
  const [job] = await useDb().select({
    id: jobs.id, kind: jobs.kind, state: jobs.state, progress: jobs.progress, message: jobs.message, result: jobs.result,
    createdBy: jobs.createdBy, createdAt: jobs.createdAt, updatedAt: jobs.updatedAt, cancelRequestedAt: jobs.cancelRequestedAt,
  }).from(jobs).where(eq(jobs.id, id))
  if (!job || (job.createdBy !== user.id && user.role !== 'admin')) throw createError({ statusCode: 404, message: `No job ${id} that you started.` })
  const { cancelRequestedAt, ...shown } = job
  return { ...shown, cancelRequested: cancelRequestedAt != null }
})
