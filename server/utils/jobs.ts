/**
 * Background jobs: pg-boss runs them (its queue lives in PostgreSQL, so any number of worker
 * processes on any machines can share one database); our `jobs` table holds what people see:
 * state, progress 0..1, message, result, and which process runs it (GET /api/jobs/:id).
 *
 *   defineJob('import-release', { run: async (data, job) => { await job.progress(0.5, 'Half'); return result } })
 *   const id = await createJob(tx, 'import-release', userId, { releaseId })   // inside the caller's transaction
 *   await dispatchJob(id, 'import-release', { releaseId })                    // after commit
 *
 * Where jobs run: only processes whose role runs jobs (COUNTERPART_ROLE worker or all, see
 * processRole.ts) take them off the queue; a web process only sends. A handler's return
 * value becomes the job's result; a throw fails the job with its message (and `problems`,
 * when the error carries them). Jobs do not retry.
 *
 * Cancel (POST /api/jobs/:id/cancel): a queued job never starts; a running job's next
 * job.progress(...) throws JobCancelled (jobCancelled.ts), and the job ends "cancelled".
 *
 * A process that dies: a running job beats every 2 s and holds a liveness lock
 * (../services/jobs/liveness.ts); every process sweeps every 3 s, failing jobs silent for
 * 10 s whose lock is gone and running their kind's `abandoned` hook.
 */
import { and, eq } from 'drizzle-orm'
import PgBoss from 'pg-boss'
import { jobs } from '~~/db/schema'
import { afterCancel, requestCancel } from '../services/jobs/cancel'
import { closeLiveness } from '../services/jobs/liveness'
import { runJob } from '../services/jobs/run'
import { SWEEP_MS, sweepDeadJobs } from '../services/jobs/sweep'
import type { SessionUser } from './auth'
import type { Db } from './db'

export interface JobContext {
  jobId: string
  userId: number | null
  /**
   * Records progress; throws JobCancelled once the job has been cancelled. Writes closer than
   * 200 ms apart are skipped, so a cancel is seen by the first call that writes (at most
   * 200 ms after it) or, between calls, by the next heartbeat (2 s).
   */
  progress(fraction: number, message?: string): Promise<void>
}

export interface JobDefinition<T> {
  run(data: T, job: JobContext): Promise<unknown>
  /**
   * Clean-up for a job that will never finish its work: its process died ('died', called by
   * the sweep) or it was cancelled before it started ('cancelled'). Gets the job's initial result.
   */
  abandoned?(jobId: string, initial: Record<string, unknown> | null, reason: 'died' | 'cancelled'): Promise<void>
}

const definitions = new Map<string, JobDefinition<any>>()
let started: Promise<PgBoss> | undefined
let sweeper: ReturnType<typeof setInterval> | undefined

function databaseUrl(): string {
  return process.env.DATABASE_URL || useRuntimeConfig().databaseUrl
}

export function defineJob<T extends object>(kind: string, definition: JobDefinition<T>): void {
  definitions.set(kind, definition)
  if (started && runsJobs()) started.then(boss => listen(boss, kind)).catch(() => {})
}

/**
 * Starts pg-boss once per process (consuming every defined kind when this process runs
 * jobs) and the sweep; the promise is kept so senders can wait for it.
 */
export function startJobs(): Promise<PgBoss> {
  started ??= (async () => {
    const boss = new PgBoss({ connectionString: databaseUrl(), max: 4 })
    boss.on('error', e => console.error('[jobs]', e.message))
    await boss.start()
    if (runsJobs()) for (const kind of definitions.keys()) await listen(boss, kind)
    return boss
  })()
  if (!sweeper) {
    sweepAbandonedJobs().catch(() => {})
    sweeper = setInterval(() => sweepAbandonedJobs().catch(() => {}), SWEEP_MS)
    sweeper.unref()
  }
  return started
}

export async function stopJobs(): Promise<void> {
  clearInterval(sweeper)
  sweeper = undefined
  if (!started) return
  const boss = await started.catch(() => null)
  started = undefined
  listening.clear()
  await boss?.stop({ graceful: false, wait: false }).catch(() => {})
  await closeLiveness()
}

const listening = new Set<string>()
async function listen(boss: PgBoss, kind: string) {
  if (listening.has(kind)) return
  listening.add(kind)
  await boss.createQueue(kind)
  const runner = runnerName()
  await boss.work<Record<string, unknown>>(kind, { pollingIntervalSeconds: 0.5, batchSize: 1 }, async (batch) => {
    for (const job of batch) await runJob(definitions.get(kind), kind, job.id, job.data, databaseUrl(), runner)
  })
}

/** The job kinds this process takes off the queue (none in a web process). */
export function consumedKinds(): string[] {
  return [...listening]
}

/** Creates our row for a job (state queued). Use the caller's transaction. */
export async function createJob(db: Pick<Db, 'insert'>, kind: string, userId: number | null, initial: Record<string, unknown> = {}): Promise<string> {
  const [row] = await db.insert(jobs).values({ kind, createdBy: userId, result: initial, message: 'Waiting to start' }).returning({ id: jobs.id })
  return row!.id
}

const queues = new Set<string>()

/** Hands a created job to the queue; a queue failure fails the job with the reason. */
export async function dispatchJob(id: string, kind: string, data: object): Promise<void> {
  try {
    const boss = await startJobs()
    if (!queues.has(kind)) {
      await boss.createQueue(kind)
      queues.add(kind)
    }
    await boss.send(kind, { ...data, jobId: id }, { id, retryLimit: 0, expireInHours: 2 })
  }
  catch (e) {
    await useDb().update(jobs).set({ state: 'failed', message: `Could not queue the job: ${(e as Error).message}`, updatedAt: new Date() })
      .where(and(eq(jobs.id, id), eq(jobs.state, 'queued')))
    throw e
  }
}

/** Cancels a job for its creator or an admin (404 otherwise, 409 when it has finished). */
export async function cancelJob(user: SessionUser, id: string) {
  const outcome = await requestCancel(user, id)
  await afterCancel(outcome, definitions.get(outcome.kind), async (kind, jobId) => {
    await (await startJobs()).cancel(kind, jobId)
  }).catch(e => console.error('[jobs] clean-up after cancel of', id, e))
  return { id: outcome.id, kind: outcome.kind, state: outcome.state, message: outcome.message }
}

/** Fails jobs whose process died, and lets their kind clean up (see sweep.ts). */
export function sweepAbandonedJobs(): Promise<number> {
  return sweepDeadJobs(kind => definitions.get(kind))
}
