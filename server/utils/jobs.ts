/**
 * Background jobs: pg-boss runs them (its queue lives in PostgreSQL, so several worker
 * processes on several machines can share one database); our `jobs` table holds what
 * people see: state, progress 0..1, message and result (GET /api/jobs/:id).
 *
 *   defineJob('import-release', async (data, job) => { await job.progress(0.5, 'Half'); return result })
 *   const id = await createJob(tx, 'import-release', userId, { releaseId })   // inside the caller's transaction
 *   await dispatchJob(id, 'import-release', { releaseId })                    // after commit
 *
 * A handler's return value becomes the job's result; a throw fails the job with its
 * message (and `problems`, when the error carries them). Jobs do not retry. A running job
 * touches its row every 20 s; one silent for 3 minutes (its process died) is failed by
 * the sweep, which also runs each job kind's `abandoned` hook.
 */
import PgBoss from 'pg-boss'
import { and, eq, lt, sql } from 'drizzle-orm'
import { jobs } from '~~/db/schema'
import type { Db } from './db'

export interface JobContext {
  jobId: string
  userId: number | null
  progress(fraction: number, message?: string): Promise<void>
}

export interface JobDefinition<T> {
  run(data: T, job: JobContext): Promise<unknown>
  /** Clean-up for a job whose process died (the sweep calls it with the job's initial result). */
  abandoned?(jobId: string, initial: Record<string, unknown> | null): Promise<void>
}

const definitions = new Map<string, JobDefinition<any>>()
let started: Promise<PgBoss> | undefined

const HEARTBEAT_MS = 20_000
const STALE_MINUTES = 3

export function defineJob<T extends object>(kind: string, definition: JobDefinition<T>): void {
  definitions.set(kind, definition)
  if (started) started.then(boss => listen(boss, kind)).catch(() => {})
}

/** Starts pg-boss once per process; the promise is kept so senders can wait for it. */
export function startJobs(): Promise<PgBoss> {
  started ??= (async () => {
    const url = process.env.DATABASE_URL || useRuntimeConfig().databaseUrl
    const boss = new PgBoss({ connectionString: url, max: 4 })
    boss.on('error', e => console.error('[jobs]', e.message))
    await boss.start()
    for (const kind of definitions.keys()) await listen(boss, kind)
    return boss
  })()
  return started
}

export async function stopJobs(): Promise<void> {
  if (!started) return
  const boss = await started.catch(() => null)
  started = undefined
  await boss?.stop({ graceful: false, wait: false }).catch(() => {})
}

const listening = new Set<string>()
async function listen(boss: PgBoss, kind: string) {
  if (listening.has(kind)) return
  listening.add(kind)
  await boss.createQueue(kind)
  await boss.work<Record<string, unknown>>(kind, { pollingIntervalSeconds: 0.5, batchSize: 1 }, async (batch) => {
    for (const job of batch) await runOne(kind, job.id, job.data)
  })
}

/** Creates our row for a job (state queued). Use the caller's transaction. */
export async function createJob(db: Pick<Db, 'insert'>, kind: string, userId: number | null, initial: Record<string, unknown> = {}): Promise<string> {
  const [row] = await db.insert(jobs).values({ kind, createdBy: userId, result: initial, message: 'Waiting to start' }).returning({ id: jobs.id })
  return row!.id
}

/** Hands a created job to the queue; a queue failure fails the job with the reason. */
export async function dispatchJob(id: string, kind: string, data: object): Promise<void> {
  try {
    const boss = await startJobs()
    await boss.send(kind, { ...data, jobId: id }, { id, retryLimit: 0, expireInHours: 2 })
  }
  catch (e) {
    await finishJob(id, 'failed', `Could not queue the job: ${(e as Error).message}`, null)
    throw e
  }
}

async function finishJob(id: string, state: 'done' | 'failed', message: string, result: unknown) {
  await useDb().update(jobs).set({ state, message, result: result ?? null, progress: state === 'done' ? 1 : sql`${jobs.progress}`, updatedAt: new Date() }).where(eq(jobs.id, id))
}

async function runOne(kind: string, id: string, data: Record<string, unknown>) {
  const db = useDb()
  const definition = definitions.get(kind)
  const [row] = await db.update(jobs).set({ state: 'running', message: 'Started', updatedAt: new Date() })
    .where(and(eq(jobs.id, id), eq(jobs.state, 'queued'))).returning({ createdBy: jobs.createdBy })
  if (!row) return // failed by the sweep or already run elsewhere
  if (!definition) {
    await finishJob(id, 'failed', `No worker knows jobs of kind "${kind}".`, null)
    return
  }
  let last = 0
  const heartbeat = setInterval(() => {
    db.update(jobs).set({ updatedAt: new Date() }).where(and(eq(jobs.id, id), eq(jobs.state, 'running'))).catch(() => {})
  }, HEARTBEAT_MS)
  const context: JobContext = {
    jobId: id,
    userId: row.createdBy,
    async progress(fraction, message) {
      const now = Date.now()
      if (now - last < 200 && fraction < 1) return
      last = now
      await db.update(jobs).set({ progress: Math.max(0, Math.min(1, fraction)), message: message ?? null, updatedAt: new Date() })
        .where(and(eq(jobs.id, id), eq(jobs.state, 'running')))
    },
  }
  try {
    const result = await definition.run(data, context)
    await finishJob(id, 'done', 'Done', result)
  }
  catch (e) {
    const err = e as Error & { problems?: unknown[] }
    await finishJob(id, 'failed', err.message, { ...(data.releaseId ? { releaseId: data.releaseId } : {}), message: err.message, errors: err.problems ?? [] })
  }
  finally {
    clearInterval(heartbeat)
  }
}

/** Fails jobs whose process stopped touching them, and lets their kind clean up. */
export async function sweepAbandonedJobs(): Promise<number> {
  const db = useDb()
  const stale = await db.update(jobs)
    .set({ state: 'failed', message: 'The job stopped (its server process ended); nothing it was doing was kept.', updatedAt: new Date() })
    .where(and(eq(jobs.state, 'running'), lt(jobs.updatedAt, sql`now() - make_interval(mins => ${STALE_MINUTES})`)))
    .returning({ id: jobs.id, kind: jobs.kind, result: jobs.result })
  for (const job of stale) {
    await definitions.get(job.kind)?.abandoned?.(job.id, job.result as Record<string, unknown> | null).catch(e => console.error('[jobs] clean-up', e))
  }
  return stale.length
}
