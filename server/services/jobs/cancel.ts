/**
 * Cancelling a job, for its creator or an admin. A queued job is cancelled at once (it will
 * never start; its kind's `abandoned` hook cleans up, e.g. the import's release is marked
 * failed). A running job is asked to stop: its next progress report throws JobCancelled,
 * the handler undoes its work, and the job ends "cancelled". A finished job is a 409.
 */
import { eq } from 'drizzle-orm'
import { jobs } from '~~/db/schema'
import type { SessionUser } from '../../utils/auth'
import type { JobDefinition } from '../../utils/jobs'

const FINISHED = { done: 'finished', failed: 'failed', cancelled: 'been cancelled' } as const

export interface CancelOutcome {
  id: string
  kind: string
  state: 'queued' | 'running' | 'done' | 'failed' | 'cancelled'
  message: string | null
  /** True when the job never started (cancelled at once, clean-up due). */
  beforeStart: boolean
  initial: Record<string, unknown> | null
}

export async function requestCancel(user: SessionUser, id: string): Promise<CancelOutcome> {
  return await useDb().transaction(async (tx) => {
    const [job] = await tx.select({ kind: jobs.kind, state: jobs.state, createdBy: jobs.createdBy, result: jobs.result, cancelRequestedAt: jobs.cancelRequestedAt })
      .from(jobs).where(eq(jobs.id, id)).for('update')
    if (!job || (job.createdBy !== user.id && user.role !== 'admin')) throw createError({ statusCode: 404, message: `No job ${id} that you started.` })
    if (job.state !== 'queued' && job.state !== 'running') {
      throw createError({ statusCode: 409, message: `This job has already ${FINISHED[job.state]}; there is nothing to cancel.` })
    }
    const base = { id, kind: job.kind, initial: job.result as Record<string, unknown> | null }
    if (job.state === 'running' && job.cancelRequestedAt) return { ...base, state: 'running', message: 'Cancelling…', beforeStart: false }
    const now = new Date()
    const next = job.state === 'queued'
      ? { state: 'cancelled' as const, message: 'Cancelled before it started; nothing was done.' }
      : { state: 'running' as const, message: 'Cancelling…' }
    await tx.update(jobs).set({ ...next, cancelRequestedAt: now, updatedAt: now }).where(eq(jobs.id, id))
    await audit(tx, { userId: user.id, action: 'cancel', entity: 'job', entityId: id, before: { kind: job.kind, state: job.state }, after: { state: next.state, cancelRequestedAt: now.toISOString() } })
    return { ...base, ...next, beforeStart: job.state === 'queued' }
  })
}

/** After the commit: clean-up for a job that never started (the queue entry is dropped too). */
export async function afterCancel(outcome: CancelOutcome, definition: JobDefinition<any> | undefined, dropQueued: (kind: string, id: string) => Promise<void>) {
  if (!outcome.beforeStart) return
  await dropQueued(outcome.kind, outcome.id).catch(() => {})
  await definition?.abandoned?.(outcome.id, outcome.initial, 'cancelled')
}
