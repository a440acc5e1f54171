/**
 * Runs one queued job in this process: claims its row (only a queued job starts, so a job
 * pg-boss hands out twice still runs once), holds its liveness lock, beats every
 * HEARTBEAT_MS, passes cancellation to the handler through progress(), and writes the
 * outcome: done, failed (with the handler's message) or cancelled.
 */
import { and, eq, sql } from 'drizzle-orm'
import { jobs } from '~~/db/schema'
import type { JobContext, JobDefinition } from '../../utils/jobs'
import { JobCancelled, isJobCancelled } from '../../utils/jobCancelled'
import { holdJobLock, releaseJobLock } from './liveness'

export const HEARTBEAT_MS = 2_000
/** Progress writes closer together than this are skipped (the last one, at 1, never is). */
const PROGRESS_GAP_MS = 200

type Outcome = 'done' | 'failed' | 'cancelled'

async function finish(id: string, state: Outcome, message: string, result: unknown) {
  // only a running row: a job the sweep already failed keeps that verdict
  await useDb().update(jobs)
    .set({ state, message, result: result ?? null, progress: state === 'done' ? 1 : sql`${jobs.progress}`, updatedAt: new Date() })
    .where(and(eq(jobs.id, id), eq(jobs.state, 'running')))
}

/** What a failed or cancelled job keeps in its result: what it was given (no job id) and why. */
function keptOf(data: Record<string, unknown>, message: string, problems: unknown[] = []) {
  return { ...(data.releaseId ? { releaseId: data.releaseId } : {}), message, errors: problems }
}

export async function runJob(definition: JobDefinition<any> | undefined, kind: string, id: string, data: Record<string, unknown>, databaseUrl: string, runner: string): Promise<void> {
  const db = useDb()
  const locked = await holdJobLock(databaseUrl, id)
  try {
    const [row] = await db.update(jobs).set({ state: 'running', message: 'Started', runner, updatedAt: new Date() })
      .where(and(eq(jobs.id, id), eq(jobs.state, 'queued'))).returning({ createdBy: jobs.createdBy })
    if (!row) return // cancelled before it started, failed, or already run elsewhere
    if (!definition) {
      await finish(id, 'failed', `No worker knows jobs of kind "${kind}".`, null)
      return
    }
    await runClaimed(definition, id, row.createdBy, data)
  }
  finally {
    if (locked) await releaseJobLock(databaseUrl, id)
  }
}

async function runClaimed(definition: JobDefinition<any>, id: string, createdBy: number | null, data: Record<string, unknown>) {
  const db = useDb()
  let stop: JobCancelled | null = null
  const note = (row: { cancelRequestedAt: Date | null } | undefined) => {
    if (stop) return
    if (!row) stop = new JobCancelled('The job was ended elsewhere (its row is no longer running).')
    else if (row.cancelRequestedAt) stop = new JobCancelled()
  }
  const beat = () => db.update(jobs).set({ updatedAt: new Date() })
    .where(and(eq(jobs.id, id), eq(jobs.state, 'running')))
    .returning({ cancelRequestedAt: jobs.cancelRequestedAt })
    .then(rows => note(rows[0]), () => {})
  const heartbeat = setInterval(beat, HEARTBEAT_MS)
  let last = 0
  const context: JobContext = {
    jobId: id,
    userId: createdBy,
    async progress(fraction, message) {
      if (stop) throw stop
      const now = Date.now()
      if (now - last < PROGRESS_GAP_MS && fraction < 1) return
      last = now
      const rows = await db.update(jobs)
        .set({ progress: Math.max(0, Math.min(1, fraction)), message: message ?? null, updatedAt: new Date() })
        .where(and(eq(jobs.id, id), eq(jobs.state, 'running')))
        .returning({ cancelRequestedAt: jobs.cancelRequestedAt })
      note(rows[0])
      if (stop) throw stop
    },
  }
  try {
    const result = await definition.run(data, context)
    await finish(id, 'done', stop ? 'Done (it finished before the cancel took effect)' : 'Done', result)
  }
  catch (e) {
    if (stop || isJobCancelled(e)) {
      const message = (stop ?? e as Error).message
      await finish(id, 'cancelled', message, keptOf(data, message))
    }
    else {
      const err = e as Error & { problems?: unknown[] }
      await finish(id, 'failed', err.message, keptOf(data, err.message, err.problems))
    }
  }
  finally {
    clearInterval(heartbeat)
  }
}
