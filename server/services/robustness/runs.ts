/**
 * Robustness runs of a study: each requested check becomes a row of robustness_runs and a
 * background job (job.ts). Starting reads the checked run (the newest unless named), fixes
 * the spec the engine will read (the run's spec, the check's options and, for alternative
 * pools, the named pools as the Pool step stands now) and queues one job per check.
 * Re-running is starting again: older rows stay as the record.
 */
import { and, desc, eq, inArray } from 'drizzle-orm'
import { robustnessRuns, studyRuns, users, type Study } from '~~/db/schema'
import { ROBUSTNESS_LABELS, type RobustnessKind } from '#shared/engine/robustness'
import type { robustnessStartSchema } from '#shared/schemas/robustness'
import type { z } from 'zod'
import { namedPools } from './pools'
import { ROBUSTNESS_JOB } from './job'

type StartInput = z.output<typeof robustnessStartSchema>

const columns = {
  id: robustnessRuns.id,
  studyId: robustnessRuns.studyId,
  runId: robustnessRuns.runId,
  kind: robustnessRuns.kind,
  spec: robustnessRuns.spec,
  fingerprint: robustnessRuns.fingerprint,
  status: robustnessRuns.status,
  progress: robustnessRuns.progress,
  message: robustnessRuns.message,
  result: robustnessRuns.result,
  jobId: robustnessRuns.jobId,
  createdAt: robustnessRuns.createdAt,
  updatedAt: robustnessRuns.updatedAt,
  createdBy: users.name,
}

/** Whether a run's design has comparison units to vary (an ITS without comparison has none). */
function hasPool(spec: Record<string, unknown>): boolean {
  if (spec.design !== 'its') return true
  const its = spec.its as { comparison?: string } | undefined
  return !!its?.comparison && its.comparison !== 'none'
}

export async function startRobustness(study: Study, userId: number, input: StartInput) {
  const db = useDb()
  const where = input.runId ? and(eq(studyRuns.studyId, study.id), eq(studyRuns.id, input.runId)) : eq(studyRuns.studyId, study.id)
  const [run] = await db.select({ id: studyRuns.id, spec: studyRuns.spec, design: studyRuns.design }).from(studyRuns).where(where).orderBy(desc(studyRuns.id)).limit(1)
  if (!run) {
    if (input.runId) throw createError({ statusCode: 404, message: `Study ${study.id} has no run ${input.runId}.` })
    badRequest('This study has no estimate yet: run one on the Estimates step, then check its robustness.')
  }
  const noPool = input.kinds.filter(k => k !== 'placebo_time' && !hasPool(run.spec))
  if (noPool.length) badRequest(`Run #${run.id} compares the treated series with its own past only (no comparison jurisdictions), so ${noPool.map(k => ROBUSTNESS_LABELS[k].toLowerCase()).join(', ')} cannot be run on it. Run placebo in time, or check a run with a comparison.`)
  if (input.kinds.includes('placebo_time') && typeof run.spec.start === 'object' && run.spec.start !== null && new Set(Object.values(run.spec.start)).size > 1) {
    badRequest('The treated jurisdictions start at different dates, so there is no single start to move: placebo in time needs one shared start (check one adoption group per study).')
  }
  const comparison = (run.spec.comparison as string[] | undefined) ?? []
  const pools = input.kinds.includes('pools') ? await namedPools(study, comparison) : null
  const specOf = (kind: RobustnessKind) => ({
    kind,
    runId: run.id,
    run: run.spec,
    ...(kind === 'placebo_time' ? { minDistance: input.options.minDistance } : {}),
    ...(kind === 'pools' ? { pools } : {}),
  })
  const created = await db.transaction(async (tx) => {
    const out: { id: number, jobId: string }[] = []
    for (const kind of input.kinds) {
      const [row] = await tx.insert(robustnessRuns).values({ studyId: study.id, runId: run.id, kind, spec: specOf(kind), createdBy: userId, message: 'Waiting to start' }).returning({ id: robustnessRuns.id })
      const jobId = await createJob(tx, ROBUSTNESS_JOB, userId, { robustnessId: row!.id })
      await tx.update(robustnessRuns).set({ jobId }).where(eq(robustnessRuns.id, row!.id))
      out.push({ id: row!.id, jobId })
    }
    await audit(tx, { userId, action: 'robustness', entity: 'study', entityId: study.id, after: { runId: run.id, kinds: input.kinds, robustnessIds: out.map(o => o.id) } })
    return out
  })
  for (const c of created) {
    await dispatchJob(c.jobId, ROBUSTNESS_JOB, { robustnessId: c.id }).catch(async (e: Error) => {
      await db.update(robustnessRuns).set({ status: 'failed', message: `Could not queue the check: ${e.message}`, updatedAt: new Date() }).where(eq(robustnessRuns.id, c.id))
    })
  }
  return listRobustness(study.id, created.map(c => c.id))
}

export async function listRobustness(studyId: number, ids?: number[]) {
  const where = ids ? and(eq(robustnessRuns.studyId, studyId), inArray(robustnessRuns.id, ids.length ? ids : [-1])) : eq(robustnessRuns.studyId, studyId)
  return useDb().select(columns).from(robustnessRuns).leftJoin(users, eq(users.id, robustnessRuns.createdBy)).where(where).orderBy(desc(robustnessRuns.id))
}
export type RobustnessView = Awaited<ReturnType<typeof listRobustness>>[number]

/** Sets a queued or running check to cancelled; its job sees the flag between units and stops. */
export async function cancelRobustness(studyId: number, id: number, userId: number) {
  const db = useDb()
  await db.transaction(async (tx) => {
    const [row] = await tx.select({ status: robustnessRuns.status }).from(robustnessRuns).where(and(eq(robustnessRuns.id, id), eq(robustnessRuns.studyId, studyId))).for('update')
    if (!row) throw createError({ statusCode: 404, message: `Study ${studyId} has no robustness check ${id}.` })
    if (row.status !== 'queued' && row.status !== 'running') throw createError({ statusCode: 409, message: `This check has already ended (${row.status}); there is nothing to cancel.` })
    await tx.update(robustnessRuns).set({ status: 'cancelled', message: 'Cancelled', updatedAt: new Date() }).where(eq(robustnessRuns.id, id))
    await audit(tx, { userId, action: 'robustness.cancel', entity: 'study', entityId: studyId, after: { robustnessId: id } })
  })
  const [view] = await listRobustness(studyId, [id])
  return view!
}
