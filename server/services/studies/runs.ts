/**
 * Runs: one estimate of a study, stored with its spec, the fingerprint of the exact rows
 * the engine read, the release ids those rows came from, how to read them again
 * (study_runs.data) and the engine's result. A run is compared with the previous run of
 * the same design: what moved (estimate, SE) and whether the data changed.
 */
import { and, desc, eq, sql } from 'drizzle-orm'
import { studyRuns, users, type Study, type StudyRun } from '~~/db/schema'
import type { RunData } from '~~/db/jsonTypes'
import { isEngineError, type EstimateResult, type Spec } from '~~/server/engine'
import type { InferenceResult } from '#shared/engine/result'
import { engineTask, packRows } from '~~/server/utils/enginePool'
import type { RunCreate } from '#shared/schemas/studies'
import type { SessionUser } from '~~/server/utils/auth'
import { runCreateSchema } from '#shared/schemas/studies'
import type { z } from 'zod'
import { compareRuns } from './compareRuns'
import { canonicalJson } from './fingerprint'
import { joinGapPaths, splitGapPaths } from './gapPaths'
import { asStoredJson } from './storedJson'
import { assemblePool, candidateContext, includedPool, poolDecisions, studySource } from './candidates'
import { readStudyRows, subsetStudyRows } from './rows'
import { buildRunSpec, isCountModel, laterInterventions, runUsesPool } from './spec'

type RunInput = z.output<typeof runCreateSchema>

const runColumns = {
  id: studyRuns.id,
  studyId: studyRuns.studyId,
  design: studyRuns.design,
  spec: studyRuns.spec,
  fingerprint: studyRuns.fingerprint,
  releaseIds: studyRuns.releaseIds,
  data: studyRuns.data,
  result: studyRuns.result,
  createdAt: studyRuns.createdAt,
  createdBy: studyRuns.createdBy,
  createdByName: users.name,
}
type RunRow = Omit<StudyRun, 'gapPaths'> & { createdByName: string | null }

/** What compareRuns reads of the previous run: its spec, fingerprint, releases and effect (not the whole result). */
type PreviousRun = Pick<StudyRun, 'id' | 'spec' | 'fingerprint' | 'releaseIds'> & { result: { effect: unknown } }

/** The run of the same design just before `runId`, as much as compareRuns needs (named: parsed and planned once a connection). */
async function previousRun(studyId: number, design: StudyRun['design'], runId: number): Promise<PreviousRun | undefined> {
  const { rows: [previous] } = await usePool().query<Omit<PreviousRun, 'result'> & { effect: unknown }>({
    name: 'previous_run',
    text: `SELECT id, spec, fingerprint, release_ids AS "releaseIds", result -> 'effect' AS effect FROM study_runs
           WHERE study_id = $1 AND design = $2 AND id < $3 ORDER BY id DESC LIMIT 1`,
    values: [studyId, design, runId],
  })
  return previous && { id: previous.id, spec: previous.spec, fingerprint: previous.fingerprint, releaseIds: previous.releaseIds, result: { effect: previous.effect } }
}

function present(run: RunRow, previous?: RunRow | PreviousRun) {
  return {
    id: run.id,
    studyId: run.studyId,
    design: run.design,
    spec: run.spec,
    fingerprint: run.fingerprint,
    releaseIds: run.releaseIds,
    // a run stored before runs kept how they read their rows has data {}
    releases: run.data.releases ?? [],
    units: run.data.source?.units ?? [],
    result: run.result,
    createdAt: run.createdAt,
    createdBy: run.createdByName,
    compare: compareRuns(run, previous),
  }
}
export type RunView = ReturnType<typeof present>

export async function createRun(study: Study, user: Pick<SessionUser, 'id' | 'name'>, input: RunInput | RunCreate) {
  const userId = user.id
  const { design, options } = runCreateSchema.parse(input)
  const [ctx, decisions] = await Promise.all([candidateContext(study), poolDecisions(study.id)])
  const comparison = includedPool(ctx, decisions)
  const usesPool = runUsesPool(design, options)
  if (usesPool && !comparison.length) badRequest('The pool is empty: include at least one comparison jurisdiction on the Pool step.')
  if (design === 'synthetic' && study.treated.length !== 1) badRequest(`The weighted comparison is built for one treated jurisdiction; this study has ${study.treated.length}. Use difference-in-differences, or a study per jurisdiction.`)
  const units = usesPool ? [...study.treated, ...comparison] : [...study.treated]
  const counts = isCountModel(design, options)
  if (counts && (study.transform !== 'rate' || !study.denominator)) badRequest('A count model needs the outcome recorded as a count with a denominator: set the study\'s transform to "rate" with a denominator measure, or use the linear model.')
  const source = { ...studySource(study, units.sort()), ...(counts ? { counts: true } : {}) }
  // the candidate context holds the current rows of every unit (it is rebuilt whenever a release
  // of the study's measures is imported): the run's units are a subset, the very rows a new read would give; a count
  // model reads its own (the count and the exposure beside the rate)
  const read = (!counts && subsetStudyRows(ctx.data, units)) || await readStudyRows(source)
  const periods = [...new Set(read.rows.map(r => r.period))].sort()
  const specInput = buildRunSpec(study, design, options, comparison, periods)
  let result: EstimateResult
  let spec: Spec
  let fingerprint: string
  try {
    // parse, estimate and fingerprint in an engine thread (server/utils/enginePool.ts)
    // the rows are known by their source and the releases they came from (imported releases never change)
    const rowsKey = JSON.stringify([source, read.releaseIds])
    // and the same rows under the same spec give the same answer (the engine is pure and seeded)
    // (read-only: the warnings below go on a copy)
    ;({ spec, result, fingerprint } = await engineTask(() => ({ kind: 'run', rows: packRows(read.rows), spec: specInput, rowsKey }), `run ${rowsKey} ${canonicalJson(specInput)}`, { readOnly: true }))
    result = { ...result, warnings: [...result.warnings] }
  }
  catch (e) {
    if (isEngineError(e)) badRequest(e.message)
    throw e
  }
  if (design === 'staggered' && (study.window || study.covariates.length)) {
    result.warnings.push(`Group-time effects use every period and no covariates, so the study's ${[study.window ? 'window' : '', study.covariates.length ? 'covariates' : ''].filter(Boolean).join(' and ')} ${study.window && study.covariates.length ? 'are' : 'is'} not applied in this run.`)
  }
  const later = laterInterventions(study)
  const phases = spec.did?.phases
  if (design === 'did' && later.length && !phases?.length) {
    result.warnings.push(`The treated period spans a later intervention (${later.map(l => `${l.label}, ${l.period}`).join('; ')}): this estimate averages over it. Choose "each intervention separately" to estimate each phase.`)
  }
  const data: RunData = { source, frequency: read.frequency, releases: read.releases, pool: assemblePool(ctx, decisions).rows }
  // the placebo gap paths go in a column of their own, as bytes, read only by the chart
  let gapPaths: Buffer | null
  ;({ result, paths: gapPaths } = splitGapPaths(result))
  type Stored = { id: number, createdAt: Date, previous: (Omit<PreviousRun, 'result' | 'releaseIds'> & { release_ids: number[], effect: unknown }) | null }
  const stored = await changeStudy(study.id, null, async (client) => {
    // the run, its audit entry and the previous run of the design in one statement: with the study
    // locked no other run of it can commit meanwhile, and the statement's snapshot, taken under the
    // lock, holds every earlier run but not this one
    const { rows: [row] } = await client.query<Stored>({
      name: 'run_insert',
      text: `WITH previous AS (
         SELECT id, spec, fingerprint, release_ids, result -> 'effect' AS effect FROM study_runs
         WHERE study_id = $1 AND design = $2 ORDER BY id DESC LIMIT 1),
       run AS (
         INSERT INTO study_runs (study_id, design, spec, fingerprint, release_ids, data, result, gap_paths, created_by)
         VALUES ($1, $2, $3::jsonb, $4, $5::jsonb, $6::jsonb, $7::jsonb, $8, $9) RETURNING id, created_at),
       logged AS (
         INSERT INTO audit_log (user_id, action, entity, entity_id, after)
         SELECT $9, 'run', 'study', $1::text, jsonb_build_object('runId', run.id) || $10::jsonb FROM run)
       SELECT id, created_at AS "createdAt", (SELECT row_to_json(previous) FROM previous) AS previous FROM run`,
      values: [study.id, design, JSON.stringify(spec), fingerprint, JSON.stringify(read.releaseIds), JSON.stringify(data), JSON.stringify(result), gapPaths, userId,
        JSON.stringify({ design, fingerprint, releaseIds: read.releaseIds, effect: result.effect })],
    })
    return row!
  })
  const p = stored.previous
  const previous: PreviousRun | undefined = p ? { id: p.id, spec: p.spec, fingerprint: p.fingerprint, releaseIds: p.release_ids, result: { effect: p.effect } } : undefined
  // answered from what was just stored (reading the run back would parse its JSON twice more)
  // in the form a read gives (jsonb orders object keys): the reply equals a later GET of the run
  // (of the data, present() sends the releases and the units, so only they are put in that form)
  const run: RunRow = { id: stored.id, studyId: study.id, design, spec: asStoredJson(spec), fingerprint, releaseIds: read.releaseIds, data: { ...data, releases: asStoredJson(data.releases) }, result: asStoredJson(result), createdAt: stored.createdAt, createdBy: userId, createdByName: user.name }
  return present(run, previous)
}

export async function listRuns(studyId: number) {
  const rows = await useDb().select(runColumns).from(studyRuns).leftJoin(users, eq(users.id, studyRuns.createdBy))
    .where(eq(studyRuns.studyId, studyId)).orderBy(desc(studyRuns.id))
  // newest first; each run compared with the one before it of the same design
  return rows.map((r, i) => present(r, rows.slice(i + 1).find(p => p.design === r.design)))
}

/** The gap paths of run `runId` of the study, the placebos' included; 404 when the run has none. */
export async function getRunGapPaths(studyId: number, runId: number) {
  const [run] = await useDb().select({ gaps: sql<InferenceResult['gaps']>`${studyRuns.result} -> 'inference' -> 'gaps'`, paths: studyRuns.gapPaths })
    .from(studyRuns).where(and(eq(studyRuns.id, runId), eq(studyRuns.studyId, studyId)))
  if (!run) throw createError({ statusCode: 404, message: `Study ${studyId} has no run ${runId}.` })
  if (!run.gaps) throw createError({ statusCode: 404, message: `Run ${runId} has no gap paths: they come with placebo-unit inference for one treated unit.` })
  return joinGapPaths(run.gaps, run.paths)
}

export async function getRun(studyId: number, runId: number) {
  const db = useDb()
  const [run] = await db.select(runColumns).from(studyRuns).leftJoin(users, eq(users.id, studyRuns.createdBy))
    .where(and(eq(studyRuns.id, runId), eq(studyRuns.studyId, studyId)))
  if (!run) throw createError({ statusCode: 404, message: `Study ${studyId} has no run ${runId}.` })
  return present(run, await previousRun(studyId, run.design, runId))
}
