/**
 * The background job of one robustness check (kind "robustness", registered in
 * server/plugins/robustness.ts). It reads the checked run's rows again (verified against the
 * run's fingerprint; alternative pools read the current rows of every pool's jurisdictions),
 * runs the engine check, and stores the result with the fingerprint of the rows it read and
 * its spec. Progress goes to the row (and the job); cancellation is seen two ways between
 * units: the row's status, polled every 0.5 s, and job.progress() throwing 'JobCancelled'.
 */
import { and, eq, inArray } from 'drizzle-orm'
import { robustnessRuns } from '~~/db/schema'
import { isEngineError } from '~~/server/engine'
import { alternativePools, isRobustnessCancelled, leaveOneOut, placeboInSpace, placeboInTime, type RobustnessHooks } from '~~/server/engine/robustness'
import type { NamedPool, RobustnessKind, RobustnessResult } from '#shared/engine/robustness'
import type { JobContext } from '~~/server/utils/jobs'
import { JobCancelled, isJobCancelled } from '~~/server/utils/jobCancelled'
import { fingerprintRows, loadRunRows, type StudyRow } from '../studies/runData'
import { engineRows, readStudyRows } from '../studies/rows'

export const ROBUSTNESS_JOB = 'robustness'
const POLL_MS = 500
const WRITE_MS = 300

interface StoredSpec {
  kind: RobustnessKind
  runId: number
  run: Record<string, unknown>
  minDistance?: number
  pools?: NamedPool[]
}


/** The rows the check reads and what it computes, by kind. */
async function compute(studyId: number, spec: StoredSpec, hooks: RobustnessHooks): Promise<{ rows: StudyRow[], result: RobustnessResult }> {
  const { run, study, rows: runRows } = await loadRunRows(studyId, spec.runId)
  const input = { rows: engineRows(runRows) }
  const actual = run.result.effect.estimate
  switch (spec.kind) {
    case 'placebo_time':
      return { rows: runRows, result: await placeboInTime(input.rows, spec.run, { minDistance: spec.minDistance, actual }, hooks) }
    case 'placebo_space':
      return { rows: runRows, result: await placeboInSpace(input, spec.run, { result: run.result }, hooks) }
    case 'leave_one_out':
      return { rows: runRows, result: await leaveOneOut(input, spec.run, { actual }, hooks) }
    case 'pools': {
      const pools = spec.pools ?? []
      const treated = (spec.run.treated as string[] | undefined) ?? study.treated
      const units = [...new Set([...treated, ...pools.flatMap(p => p.units)])].sort()
      const source = { ...run.data.source }
      const { rows } = await readStudyRows({ ...source, units })
      return { rows, result: await alternativePools({ rows: engineRows(rows) }, spec.run, pools, hooks) }
    }
  }
}

export async function runRobustnessJob(robustnessId: number, job: JobContext): Promise<unknown> {
  const db = useDb()
  const [row] = await db.update(robustnessRuns).set({ status: 'running', message: 'Started', updatedAt: new Date() })
    .where(and(eq(robustnessRuns.id, robustnessId), eq(robustnessRuns.status, 'queued'))).returning()
  if (!row) return { robustnessId, skipped: 'not queued (cancelled before it started)' }
  let cancelled = false
  const poll = setInterval(() => {
    db.select({ status: robustnessRuns.status }).from(robustnessRuns).where(eq(robustnessRuns.id, robustnessId))
      .then(([r]) => { if (r?.status === 'cancelled') cancelled = true })
      .catch(() => {})
  }, POLL_MS)
  let lastWrite = 0
  const hooks: RobustnessHooks = {
    async progress(fraction, message) {
      await job.progress(fraction, message) // throws JobCancelled once the job system cancels it
      const now = Date.now()
      if (now - lastWrite >= WRITE_MS || fraction >= 1) {
        lastWrite = now
        await db.update(robustnessRuns).set({ progress: fraction, message, updatedAt: new Date() })
          .where(and(eq(robustnessRuns.id, robustnessId), eq(robustnessRuns.status, 'running')))
      }
      // let the poll and the server's requests run between units
      await new Promise(resolve => setImmediate(resolve))
    },
    isCancelled: () => cancelled,
  }
  const spec = row.spec as unknown as StoredSpec
  try {
    const { rows, result } = await compute(row.studyId, spec, hooks)
    const fingerprint = fingerprintRows(rows, row.spec)
    const stored = await db.update(robustnessRuns).set({ status: 'done', progress: 1, message: 'Done', result: result as unknown as Record<string, unknown>, fingerprint, updatedAt: new Date() })
      .where(and(eq(robustnessRuns.id, robustnessId), eq(robustnessRuns.status, 'running'))).returning({ id: robustnessRuns.id })
    // cancelled after the last unit but before the result was kept: the cancel wins, nothing is stored
    if (!stored.length) throw new JobCancelled('The robustness check was cancelled; its result was not kept.')
    return { robustnessId, fingerprint }
  }
  catch (e) {
    if (isRobustnessCancelled(e) || isJobCancelled(e)) {
      await db.update(robustnessRuns).set({ status: 'cancelled', message: 'Cancelled', updatedAt: new Date() })
        .where(and(eq(robustnessRuns.id, robustnessId), inArray(robustnessRuns.status, ['running', 'cancelled'])))
      throw isJobCancelled(e) ? e : new JobCancelled('The robustness check was cancelled.')
    }
    const message = isEngineError(e) || (e as { statusCode?: number }).statusCode ? (e as Error).message : `The check stopped on an error: ${(e as Error).message}`
    await db.update(robustnessRuns).set({ status: 'failed', message, updatedAt: new Date() })
      .where(and(eq(robustnessRuns.id, robustnessId), eq(robustnessRuns.status, 'running')))
    throw e
  }
  finally {
    clearInterval(poll)
  }
}

/** A check whose server process died: the sweep fails its job, and this fails its row. */
export async function markRobustnessAbandoned(initial: Record<string, unknown> | null): Promise<void> {
  const id = Number(initial?.robustnessId)
  if (!id) return
  await useDb().update(robustnessRuns).set({ status: 'failed', message: 'The check stopped (its server process ended); run it again.', updatedAt: new Date() })
    .where(and(eq(robustnessRuns.id, id), inArray(robustnessRuns.status, ['queued', 'running'])))
}
