/**
 * Chart data of the Trends step, for the pool as decided: the treated series (mean of the
 * treated units) against the pool mean, in levels and indexed to each series' pre-period
 * mean (= 100), the gap (treated minus pool), every donor's series, the intervention
 * marks, and the event study (engine design "event_study") with its joint lead test and
 * pre-trend slope difference, each with a plain-language reading, and warnings.
 */
import { isEngineError, type EstimateResult } from '~~/server/engine'
import { engineTask, packRows, rowsIdentity } from '~~/server/utils/enginePool'
import { canonicalJson } from './fingerprint'
import { parsePeriod, seasonOf } from '#shared/utils/periods'
import { candidateContext, includedPool, poolDecisions } from './candidates'
import { OUTCOME } from './rows'
import { buildRunSpec, startsOf } from './spec'
import type { Study } from '~~/db/schema'

const mean = (xs: number[]) => (xs.length ? xs.reduce((a, b) => a + b, 0) / xs.length : null)

/** Share of the variance of a detrended series explained by its season (month or quarter) means. */
export function seasonalShare(periods: string[], values: (number | null)[], season: 'month' | 'quarter'): number | null {
  const pts = periods.map((p, i) => ({ x: i, s: seasonOf(p, season), y: values[i] })).filter(p => p.y != null) as { x: number, s: number, y: number }[]
  if (pts.length < 24) return null
  const mx = mean(pts.map(p => p.x))!
  const my = mean(pts.map(p => p.y))!
  const b = pts.reduce((a, p) => a + (p.x - mx) * (p.y - my), 0) / pts.reduce((a, p) => a + (p.x - mx) ** 2, 0)
  const r = pts.map(p => ({ s: p.s, e: p.y - my - b * (p.x - mx) }))
  const total = r.reduce((a, p) => a + p.e * p.e, 0)
  if (!(total > 0)) return null
  const bySeason = new Map<number, number[]>()
  for (const p of r) bySeason.set(p.s, [...(bySeason.get(p.s) ?? []), p.e])
  let explained = 0
  for (const es of bySeason.values()) explained += es.length * mean(es)! ** 2
  return explained / total
}

/** "< 0.001" or "= 0.042", to follow a "p". */
const fmtP3Eq = (p: number) => (p < 0.001 ? '< 0.001' : `= ${p.toFixed(3)}`)

export function readLeadTest(result: EstimateResult | null) {
  const wald = result?.preTrend?.wald ?? null
  const slope = result?.preTrend?.slopeDiff ?? null
  const placebo = result?.preTrend?.leadPermutation ?? null
  // the clustered F test holds its level only with many treated and many untreated clusters:
  // where the engine chose another method for the headline, it cannot be judged on its own
  const fReliable = result?.inference?.method === 'analytic' && (result.nClusters ?? 0) >= 30
  const lines: string[] = []
  if (placebo) {
    // the treated unit at the top of the ranking is unusual even where 1/(n + 1) is just 0.05
    lines.push(placebo.p <= 0.05 + 1e-9 || placebo.p <= placebo.pMin + 1e-12
      ? `Before the policy the treated unit's lead coefficients were ${placebo.p <= placebo.pMin + 1e-12 ? 'larger than every' : 'larger than almost every'} placebo unit's (p ${fmtP3Eq(placebo.p)} from ${placebo.nPlacebos} placebo units, the smallest p they allow is ${placebo.pMin.toFixed(3)}): it already moved differently from its pool, so the parallel-trends assumption is in doubt. Look at which periods differ before relying on the estimate.`
      : `Compared with ${placebo.nPlacebos} placebo units, the treated unit's leads are not unusual (p ${fmtP3Eq(placebo.p)} by placebo units). This is consistent with parallel pre-trends, but it does not prove them.`)
    if (wald && !fReliable) lines.push(`The clustered F test (F = ${wald.F.toFixed(2)}, p ${fmtP3Eq(wald.p)}) is not a guide here: with few treated units its p-value is unreliable, so read the placebo comparison instead.`)
  }
  else if (wald && !fReliable) {
    lines.push(`F = ${wald.F.toFixed(2)} (p ${fmtP3Eq(wald.p)}), but with ${result?.nClusters ?? 'few'} clusters and few treated units this test is unreliable and cannot be judged; look at the lead coefficients in the chart instead.`)
  }
  else if (wald) {
    lines.push(wald.p < 0.05
      ? `The lead coefficients are jointly different from zero (F = ${wald.F.toFixed(2)}, p ${fmtP3Eq(wald.p)}): before the policy the treated units already moved differently from the pool. The parallel-trends assumption is in doubt.`
      : `The lead coefficients are not jointly different from zero (F = ${wald.F.toFixed(2)}, p ${fmtP3Eq(wald.p)}). This is consistent with parallel pre-trends, but it does not prove them: a test with few periods or clusters has little power.`)
  }
  else lines.push('There are no lead coefficients to test (the event window has no pre-periods besides the reference).')
  if (slope) {
    lines.push(slope.p < 0.05
      ? `Before the policy the treated series' trend ran ${Math.abs(slope.estimate).toPrecision(3)} per period ${slope.estimate > 0 ? 'above' : 'below'} the pool's (p ${fmtP3Eq(slope.p)}): the trends diverge, and a difference-in-differences would count that divergence as effect.`
      : `The pre-period slopes differ by ${slope.estimate.toPrecision(3)} per period (p ${fmtP3Eq(slope.p)}), not a clear divergence.`)
    if (!fReliable) lines.push('That slope p-value comes from cluster-robust errors, which run too small with few treated units: judge the divergence by its size in the gap chart as much as by p.')
  }
  return { wald, slopeDiff: slope, placebo, fReliable, reading: lines }
}

/** `window`: the event study's window in periods from the start (ends binned); by default it follows the data. */
export async function studyTrends(study: Study, window?: { from: number, to: number }) {
  const [ctx, decisions] = await Promise.all([candidateContext(study), poolDecisions(study.id)])
  const pool = includedPool(ctx, decisions)
  const treated = new Set(study.treated)
  const inPool = new Set(pool)
  const rows = ctx.data.rows.filter(r => treated.has(r.jurisdiction) || inPool.has(r.jurisdiction))
  const periods = [...new Set(rows.map(r => r.period))].sort()
  const at = new Map(periods.map((p, i) => [p, i]))
  const T = periods.length
  const series = new Map<string, (number | null)[]>()
  for (const r of rows) {
    let s = series.get(r.jurisdiction)
    if (!s) series.set(r.jurisdiction, (s = new Array(T).fill(null)))
    s[at.get(r.period)!] = r.values[OUTCOME] ?? null
  }
  const meanOf = (codes: string[]) => periods.map((_, t) => mean(codes.map(c => series.get(c)?.[t]).filter((v): v is number => v != null)))
  const treatedMean = meanOf(study.treated)
  const poolMean = meanOf(pool)
  const isPre = periods.map(p => ctx.prePeriods.has(p))
  const index = (xs: (number | null)[]) => {
    const base = mean(xs.filter((v, t): v is number => v != null && !!isPre[t]))
    return xs.map(v => (v == null || !base ? null : (100 * v) / base))
  }
  const gap = treatedMean.map((v, t) => (v == null || poolMean[t] == null ? null : v - poolMean[t]!))
  const starts = startsOf(study)
  const marks = [
    ...study.treated.filter(c => !study.interventions.some(i => i.jurisdiction === c && i.period === starts[c])).map(c => ({ jurisdiction: c, period: starts[c]!, label: 'start' })),
    ...study.interventions,
  ]

  let eventStudy: EstimateResult | null = null
  let eventError: string | null = null
  const warnings: string[] = [...ctx.scores.warnings]
  let usedWindow: { from: number, to: number } | null = null
  try {
    const spec = buildRunSpec(study, 'event_study', window ? { eventWindow: { ...window, reference: -1, bin: true } } : {}, pool, periods)
    const ew = (spec as { eventWindow?: { from: number, to: number } }).eventWindow
    usedWindow = ew ? { from: ew.from, to: ew.to } : null
    // in an engine thread; kept for the same rows (the context's, chosen by the spec's units) and spec
    eventStudy = await engineTask(() => ({ kind: 'estimate', rows: packRows(rows), spec }), `trends ${rowsIdentity(ctx.data)} ${canonicalJson(spec)}`, { readOnly: true }) // read-only: nothing here changes it
    warnings.push(...eventStudy.warnings)
  }
  catch (e) {
    if (!isEngineError(e)) throw e
    eventError = e.message
  }
  const nPre = ctx.scores.prePeriods.length
  const freq = periods.length ? parsePeriod(periods[0]!).frequency : 'integer'
  const seasonLength = freq === 'month' ? 12 : freq === 'quarter' ? 4 : 1
  if (nPre < Math.max(8, 2 * seasonLength)) warnings.push(`Short pre-period: ${nPre} period${nPre === 1 ? '' : 's'} before the start. Pre-trend checks have little power and seasonal patterns cannot be told from trends.`)
  const clusters = study.treated.length + pool.length
  if (study.treated.length < 5 || clusters < 20) warnings.push(`Few clusters: ${study.treated.length} treated and ${pool.length} comparison jurisdiction${pool.length === 1 ? '' : 's'}. Clustered standard errors are unreliable with so few, so the estimates' intervals come from placebo units; with fewer than 19 comparison units even those cannot reach 5%.`)
  if (freq === 'month' || freq === 'quarter') {
    const share = seasonalShare(periods, treatedMean, freq)
    if (share !== null && share > 0.3) warnings.push(`Strong seasonality: the ${freq === 'month' ? 'month' : 'quarter'} of the year explains ${Math.round(share * 100)}% of the treated series' variation around its trend. Compare like seasons: interrupted time series needs seasonal terms; event-study leads near the start mix in seasonal swings.`)
  }
  return {
    periods,
    prePeriods: isPre,
    treated: { codes: study.treated, levels: treatedMean, indexed: index(treatedMean) },
    pool: { codes: pool, levels: poolMean, indexed: index(poolMean) },
    gap,
    donors: pool.map(c => ({ jurisdiction: c, levels: series.get(c) ?? new Array(T).fill(null) })),
    treatedSeries: study.treated.map(c => ({ jurisdiction: c, levels: series.get(c) ?? new Array(T).fill(null) })),
    marks,
    eventStudy: eventStudy?.eventStudy ?? null,
    effect: eventStudy?.effect ?? null,
    nClusters: eventStudy?.nClusters ?? null,
    eventError,
    leadTest: readLeadTest(eventStudy),
    /** The event window used (periods from the start), so the page can show and change it. */
    eventWindow: usedWindow,
    warnings: [...new Set(warnings)],
  }
}
