/**
 * Donor candidates of a study: every jurisdiction with outcome data that is not treated,
 * scored by the engine over the pre-period (scoreDonors), with automatic flags:
 *   related_policy  a policy event (adoption, strengthening or repeal of any policy) dated
 *                   inside the study's window (or the data's span without a window)
 *   neighbour       borders a treated jurisdiction: spillover (diffusion) is likely
 *   missing_data    more than `maxMissing` of the pre-periods have no value
 * plus any exclusion the engine reports. A unit is in the pool when the analyst's saved
 * decision says so, otherwise when it is in the suggested pool (suggestedPool.ts: among the
 * unflagged, those close to the treated unit's pre-period trend, then the k with the best
 * demeaned fit; k = SUGGESTED_POOL_SIZE, 20, unless asked), each with the reason in plain words. Each candidate
 * also carries its weight in the weighted comparison fitted on the pre-period against every
 * unflagged candidate (poolWeights.ts). Balance: pre-period means, treated against pool.
 */
import { SUGGESTED_POOL_SIZE } from '#shared/schemas/studies'
import { and, eq, inArray, lt, or, sql } from 'drizzle-orm'
import { jurisdictionNeighbours, jurisdictions, policyEvents, studyPoolDecisions, type Study } from '~~/db/schema'
import { isEngineError, type DonorScores } from '~~/server/engine'
import { engineTask, packRows } from '~~/server/utils/enginePool'
import { comparePeriods, parsePeriod } from '#shared/utils/periods'
import type { PoolRow } from '#shared/schemas/studies'
import type { StudyRow } from './fingerprint'
import type { RowSource } from '~~/db/jsonTypes'
import { readStudyRows, OUTCOME, type StudyRows } from './rows'
import { studySpecBase, startsOf } from './spec'
import { poolWeights, type PoolWeights } from './poolWeights'
import { suggestPool } from './suggestedPool'

export type Exclusion = PoolRow['exclusions'][number]

export type { PoolRow }

export interface BalanceRow { measure: string, label: string, treated: number | null, pool: number | null, difference: number | null, standardised: number | null }

export interface CandidateContext {
  study: Study
  source: RowSource
  data: StudyRows
  scores: DonorScores
  candidates: string[]
  flags: Map<string, Exclusion[]>
  info: Map<string, { id: number, name: string, kind: string, region: string | null }>
  prePeriods: Set<string>
  maxMissing: number
  /** Weighted-comparison weights against every unflagged candidate (see poolWeights.ts). */
  weights: PoolWeights
}

export function studySource(study: Study, units: string[] = []): RowSource {
  return {
    outcome: study.outcome,
    covariates: study.covariates,
    denominator: study.denominator,
    transform: study.transform,
    units,
    from: study.window?.pre[0] ?? null,
    to: study.window?.post[1] ?? null,
  }
}

const safeCompare = (a: string, b: string) => {
  try {
    return comparePeriods(a, b)
  }
  catch {
    return a < b ? -1 : a > b ? 1 : 0
  }
}

/**
 * Recently built contexts, so a pool change re-scores without reading the panel again. One per
 * study and set of the fields the context depends on, kept with a digest of the registry it
 * read, taken before reading: imported releases of the study's measures, policy events,
 * neighbour links, and the jurisdictions that existed then (id up to the largest then: a
 * jurisdiction added later has no rows of the study until a release brings them, which the
 * release part notices). A different digest builds a fresh context. A run takes its units' rows
 * from the context (subsetStudyRows): the rows a new read would give, since the context is
 * rebuilt as soon as a release of its measures is imported.
 */
const contexts = new Map<string, { at: number, ctx: CandidateContext, digest: string, lastJurisdiction: number }>()
const CONTEXT_TTL_MS = 5 * 60_000
/** Kept contexts, least recently used dropped first: room for every study in use (50 at once under load). */
const CONTEXT_CACHE_SIZE = 100

/** The registry digest (see above), over jurisdictions up to `lastJurisdiction` (null: up to the largest id now). */
async function registryDigest(study: Study, lastJurisdiction: number | null): Promise<{ digest: string, lastJurisdiction: number }> {
  // imported releases of the study's measures only: an import of another measure changes none of its rows
  const keys = [study.outcome, ...study.covariates, ...(study.denominator ? [study.denominator] : [])]
  // named: each connection parses and plans it once (it runs with every request about a study's pool)
  const { rows: [row] } = await usePool().query<{ d: string, m: number }>({ name: 'registry_digest', text: `WITH upto AS (SELECT coalesce($2::int, (SELECT max(id) FROM jurisdictions), 0) AS m)
    SELECT concat_ws(':',
      (SELECT count(*) || '-' || coalesce(sum(id), 0) FROM source_releases WHERE status = 'done'
         AND (measure_ids IS NULL OR measure_ids && ARRAY(SELECT id FROM measures WHERE key = ANY($1::text[])))),
      (SELECT count(*) || '-' || coalesce(sum(hashtext(jurisdiction_id || period || kind || policy)), 0) FROM policy_events),
      (SELECT count(*) || '-' || coalesce(sum(hashtext(jurisdiction_id || '-' || neighbour_id)), 0) FROM jurisdiction_neighbours),
      (SELECT count(*) || '-' || coalesce(sum(hashtext(code || name || kind || coalesce(region, '') || coalesce(archived_at::text, ''))), 0)
         FROM jurisdictions WHERE id <= (SELECT m FROM upto))) AS d,
      (SELECT m FROM upto) AS m`, values: [keys, lastJurisdiction] })
  return { digest: row!.d, lastJurisdiction: row!.m }
}

/** Reads the rows, scores every candidate and finds the flags (no decisions yet). */
export async function candidateContext(study: Study, maxMissing = 0.2): Promise<CandidateContext> {
  const { outcome, covariates, denominator, transform, treated, start, window, interventions } = study
  const key = JSON.stringify([study.id, outcome, covariates, denominator, transform, treated, start, window, interventions, maxMissing])
  const kept = contexts.get(key)
  const fresh = kept && Date.now() - kept.at < CONTEXT_TTL_MS ? kept : undefined
  const now = await registryDigest(study, fresh?.lastJurisdiction ?? null)
  if (fresh && fresh.digest === now.digest) {
    contexts.delete(key) // most recently used last
    contexts.set(key, fresh)
    return { ...fresh.ctx, study }
  }
  // a new context, under a digest taken before it reads anything
  const base = fresh ? await registryDigest(study, null) : now
  const ctx = await buildCandidateContext(study, maxMissing)
  contexts.delete(key)
  for (const [k, v] of contexts) if (Date.now() - v.at >= CONTEXT_TTL_MS || contexts.size >= CONTEXT_CACHE_SIZE) contexts.delete(k)
  contexts.set(key, { at: Date.now(), ctx, ...base })
  return ctx
}

async function buildCandidateContext(study: Study, maxMissing: number): Promise<CandidateContext> {
  const source = studySource(study)
  const data = await readStudyRows(source)
  const units = [...new Set(data.rows.map(r => r.jurisdiction))]
  const missingTreated = study.treated.filter(c => !units.includes(c))
  if (missingTreated.length) badRequest(`No ${study.outcome} data for the treated jurisdiction${missingTreated.length > 1 ? 's' : ''} ${missingTreated.join(', ')}${source.from ? ` between ${source.from} and ${source.to}` : ''}.`, [{ path: 'treated', message: 'No outcome data.' }])
  // a jurisdiction archived before the study was created is not offered to it; older studies keep theirs
  const archived = new Set((await useDb().select({ code: jurisdictions.code }).from(jurisdictions)
    .where(and(inArray(jurisdictions.code, units.length ? units : ['']), lt(jurisdictions.archivedAt, study.createdAt)))).map(r => r.code))
  const candidates = units.filter(u => !study.treated.includes(u) && !archived.has(u))
  if (!candidates.length) badRequest(`No other jurisdiction has ${study.outcome} data to compare with.`)
  let scores: DonorScores
  try {
    scores = await engineTask({ kind: 'scoreDonors', rows: packRows(data.rows), spec: { ...studySpecBase(study), design: 'did', comparison: candidates } }) // in an engine thread
  }
  catch (e) {
    if (isEngineError(e)) badRequest(e.message)
    throw e
  }
  const db = useDb()
  const rows = await db.select({ id: jurisdictions.id, code: jurisdictions.code, name: jurisdictions.name, kind: jurisdictions.kind, region: jurisdictions.region })
    .from(jurisdictions).where(inArray(jurisdictions.code, units))
  const info = new Map(rows.map(r => [r.code, r]))
  const idOf = new Map(rows.map(r => [r.id, r.code]))
  const treatedIds = rows.filter(r => study.treated.includes(r.code)).map(r => r.id)
  const flags = new Map<string, Exclusion[]>(candidates.map(c => [c, []]))

  // policy events inside the window (or the span of the data)
  const periods = [...new Set(data.rows.map(r => r.period))].sort(safeCompare)
  const from = source.from ?? periods[0]!
  const to = source.to ?? periods[periods.length - 1]!
  const candidateIds = rows.filter(r => flags.has(r.code)).map(r => r.id)
  const events = await db.select({ jurisdictionId: policyEvents.jurisdictionId, period: policyEvents.period, kind: policyEvents.kind, policy: policyEvents.policy, label: policyEvents.label })
    .from(policyEvents).where(inArray(policyEvents.jurisdictionId, candidateIds.length ? candidateIds : [-1]))
  for (const e of events) {
    const inside = sameFrequencyWithin(e.period, from, to)
    if (inside) flags.get(idOf.get(e.jurisdictionId)!)!.push({ reason: 'related_policy', detail: `${e.kind} of ${e.policy} in ${e.period}: ${e.label}` })
  }
  // neighbours of a treated unit (links are kept symmetric; read both directions anyway)
  if (treatedIds.length) {
    const links = await db.select().from(jurisdictionNeighbours).where(or(inArray(jurisdictionNeighbours.jurisdictionId, treatedIds), inArray(jurisdictionNeighbours.neighbourId, treatedIds)))
    const seen = new Set<string>()
    for (const l of links) {
      const [t, n] = treatedIds.includes(l.jurisdictionId) ? [l.jurisdictionId, l.neighbourId] : [l.neighbourId, l.jurisdictionId]
      const code = idOf.get(n)
      const key = `${code}:${t}`
      if (code && flags.has(code) && !seen.has(key)) {
        seen.add(key)
        flags.get(code)!.push({ reason: 'neighbour', detail: `borders treated ${idOf.get(t)}: spillover is likely` })
      }
    }
  }
  for (const s of scores.rows) {
    const list = flags.get(s.unit)
    if (!list) continue
    if (s.missingShare > maxMissing) list.push({ reason: 'missing_data', detail: `${Math.round(s.missingShare * 100)}% of pre-periods have no value (limit ${Math.round(maxMissing * 100)}%)` })
    for (const x of s.exclusions) if (!list.some(y => y.reason === x.reason)) list.push(x)
  }
  const weights = poolWeights({
    rows: data.rows,
    treated: study.treated,
    donors: candidates.filter(c => !flags.get(c)!.length),
    prePeriods: scores.prePeriods,
    transform: study.transform,
  })
  return { study, source, data, scores, candidates, flags, info, prePeriods: new Set(scores.prePeriods), maxMissing, weights }
}

function sameFrequencyWithin(p: string, from: string, to: string): boolean {
  try {
    const f = parsePeriod(from).frequency
    const q = parsePeriod(p)
    if (q.frequency === f) return comparePeriods(p, from) >= 0 && comparePeriods(p, to) <= 0
    // a differently dated event: compare its calendar text with the window's
    return p.slice(0, from.length) >= from && p.slice(0, to.length) <= to
  }
  catch {
    return false
  }
}

/** A study's pool decisions; prepared once (named), as it is read with nearly every pool or run request. */
const decisionsOf = () => useDb().select({ jurisdiction: jurisdictions.code, included: studyPoolDecisions.included, reason: studyPoolDecisions.reason })
  .from(studyPoolDecisions).innerJoin(jurisdictions, eq(jurisdictions.id, studyPoolDecisions.jurisdictionId))
  .where(eq(studyPoolDecisions.studyId, sql.placeholder('studyId')))
  .prepare('pool_decisions')
let decisionsQuery: ReturnType<typeof decisionsOf> | undefined

export async function poolDecisions(studyId: number) {
  decisionsQuery ??= decisionsOf()
  return decisionsQuery.execute({ studyId })
}

const PERIOD_WORDS: Record<string, string> = { month: 'month', quarter: 'quarter', year: 'year', week: 'week', day: 'day' }

/** The candidate table with decisions applied, the suggested pool, the weights and the balance summary. */
export function assemblePool(ctx: CandidateContext, decisions: { jurisdiction: string, included: boolean, reason: string | null }[], k = SUGGESTED_POOL_SIZE) {
  const byCode = new Map(decisions.map(d => [d.jurisdiction, d]))
  const choice = suggestPool(
    ctx.scores.rows.filter(s => ctx.flags.has(s.unit)).map(s => ({ unit: s.unit, flagged: ctx.flags.get(s.unit)!.length > 0, rmspeDemeaned: s.rmspeDemeaned, slopeDiff: s.slopeDiff })),
    k,
    PERIOD_WORDS[ctx.data.frequency] ?? 'period',
  )
  const suggested = new Set(choice.pool)
  const rows: PoolRow[] = ctx.scores.rows.filter(s => ctx.flags.has(s.unit)).map((s) => {
    const exclusions = ctx.flags.get(s.unit)!
    const d = byCode.get(s.unit)
    const i = ctx.info.get(s.unit)
    return {
      jurisdiction: s.unit,
      name: i?.name ?? s.unit,
      kind: i?.kind ?? '',
      region: i?.region ?? null,
      rmspe: s.rmspe,
      rmspeDemeaned: s.rmspeDemeaned,
      correlation: s.correlation,
      slopeDiff: s.slopeDiff,
      covariateDistance: s.covariateDistance,
      missingShare: s.missingShare,
      ranks: s.ranks,
      rank: s.rank,
      exclusions,
      flagged: exclusions.length > 0,
      included: d ? d.included : suggested.has(s.unit),
      decided: !!d,
      reason: d?.reason ?? null,
      suggested: suggested.has(s.unit),
      suggestedReason: choice.reasons.get(s.unit) ?? null,
      weight: ctx.weights.weights.get(s.unit) ?? null,
    }
  })
  rows.sort((a, b) => (a.rank ?? Infinity) - (b.rank ?? Infinity) || (a.jurisdiction < b.jurisdiction ? -1 : 1))
  const pool = rows.filter(r => r.included).map(r => r.jurisdiction)
  return {
    rows,
    summary: {
      candidates: rows.length,
      poolSize: pool.length,
      flagged: rows.filter(r => r.flagged).length,
      overridden: rows.filter(r => r.flagged && r.included).length,
      suggested: choice.pool,
      suggestion: { rule: choice.rule, note: choice.note, slopeLimit: choice.slopeLimit, eligible: choice.eligible, passed: choice.passed },
      weights: {
        fitted: ctx.weights.weights.size > 0,
        positive: [...ctx.weights.weights.values()].filter(w => w > 0).length,
        rmspePre: ctx.weights.rmspePre,
        periods: ctx.weights.periods,
        note: ctx.weights.note,
      },
      treated: ctx.study.treated,
      prePeriods: ctx.scores.prePeriods.length,
      balance: balance(ctx, pool),
      warnings: ctx.scores.warnings,
    },
  }
}

/** Each unit's pre-period means per key, kept with the context's rows (they never change once read). */
const unitMeansMemo = new WeakMap<StudyRows, Map<string, Map<string, number>>>()

/** Pre-period means of the outcome and each covariate: treated units against the pool. */
export function balance(ctx: CandidateContext, pool: string[]): BalanceRow[] {
  const keys = [OUTCOME, ...ctx.study.covariates]
  const inPool = new Set(pool)
  const treated = new Set(ctx.study.treated)
  let memo = unitMeansMemo.get(ctx.data)
  if (!memo) unitMeansMemo.set(ctx.data, (memo = new Map()))
  const unitMeans = (rows: StudyRow[], key: string) => {
    const known = memo.get(`${key}\u0000${[...ctx.prePeriods].join(',')}`)
    if (known) return known
    const acc = new Map<string, [number, number]>()
    for (const r of rows) {
      const v = r.values[key]
      if (v == null || !ctx.prePeriods.has(r.period)) continue
      const a = acc.get(r.jurisdiction) ?? [0, 0]
      a[0] += v
      a[1]++
      acc.set(r.jurisdiction, a)
    }
    const means = new Map([...acc].map(([u, [s, n]]) => [u, s / n]))
    memo.set(`${key}\u0000${[...ctx.prePeriods].join(',')}`, means)
    return means
  }
  const mean = (xs: number[]) => (xs.length ? xs.reduce((a, b) => a + b, 0) / xs.length : null)
  return keys.map((key) => {
    const m = unitMeans(ctx.data.rows, key)
    const t = mean([...m].filter(([u]) => treated.has(u)).map(([, v]) => v))
    const poolMeans = [...m].filter(([u]) => inPool.has(u)).map(([, v]) => v)
    const p = mean(poolMeans)
    const sd = poolMeans.length > 1 ? Math.sqrt(poolMeans.reduce((a, v) => a + (v - p!) ** 2, 0) / (poolMeans.length - 1)) : null
    const diff = t !== null && p !== null ? t - p : null
    return {
      measure: key === OUTCOME ? ctx.study.outcome : key,
      label: key === OUTCOME ? `${ctx.study.outcome} (outcome${ctx.study.transform === 'rate' ? ', per 1,000' : ''})` : key,
      treated: t,
      pool: p,
      difference: diff,
      standardised: diff !== null && sd ? diff / sd : null,
    }
  })
}

/** Codes of the pool as decided (saved decisions, else the suggested pool). */
export function includedPool(ctx: CandidateContext, decisions: { jurisdiction: string, included: boolean, reason: string | null }[], k = SUGGESTED_POOL_SIZE): string[] {
  return assemblePool(ctx, decisions, k).rows.filter(r => r.included).map(r => r.jurisdiction)
}

export { startsOf }
