/**
 * Weighted comparison (synthetic control; Abadie, Diamond and Hainmueller 2010, JASA
 * 105:493-505; Abadie and Gardeazabal 2003 for the first use). One treated unit, a start,
 * and donors (spec.comparison, or every other unit). Donor weights w >= 0, sum 1, minimise
 * the pre-period distance
 *
 *   sum_{t pre} (y_1t - sum_j w_j y_jt)^2        (synthWeights.ts)
 *
 * and give the synthetic series s_t = sum_j w_j y_jt for every period, the gap
 * g_t = y_1t - s_t (not demeaned), rmspePre = sqrt(mean_pre g^2), rmspePost =
 * sqrt(mean_post g^2) (population means), ratio = rmspePost / rmspePre. The effect
 * "gap_mean_post" is the mean post-period gap. There is no analytic standard error.
 *
 * Periods: pre = periods before the start (within window.pre when given), post = from the
 * start on (within window.post). A period where the treated unit has no outcome is left out
 * (warned); a donor missing any pre- or post-period outcome used, or every pre-period value
 * of a matched covariate, is left out with a warning naming it. transform "log" applies to
 * the outcome (selectSample's rules).
 *
 * Covariates (spec.synthetic.covariates): each unit's pre-period mean of the column, divided
 * by the spread of those means across the units (sample standard deviation over treated and
 * donors) and multiplied by the outcome's typical spread across units in one pre-period
 * (the root mean over pre-periods of the cross-unit variance), is appended as one more row
 * to the rows the weights match. A miss of one spread on a covariate then costs as much as
 * a miss of one spread of the outcome in one pre-period, whatever the units of either. Abadie, Diamond and Hainmueller (2010) weight predictors by a V matrix chosen
 * by a nested optimisation; equal weights on standardised rows are our documented
 * simplification. covariateBalance reports the treated unit's means and its synthetic's
 * (sum_j w_j mean_j) in the column's own units.
 *
 * Inference (always placebo in space with the ratio rank; Abadie, Diamond and Hainmueller
 * 2010, section 4): every donor j in turn is the target, with weights re-fitted on the other
 * donors (the real treated unit is never in a pool), and the same gap, RMSPEs and ratio.
 * p = #{units, treated included, with ratio >= the treated ratio} / (J + 1), ties within a
 * relative 1e-9 counted. Interval by test inversion: subtracting tau from the treated
 * post-period outcomes leaves every weight and placebo ratio unchanged and turns the
 * treated ratio into sqrt(mean_post (g - tau)^2) / rmspePre; with R_(k) the k-th largest
 * placebo ratio and k the smallest count with (1 + k)/(J + 1) > 1 - level, tau is kept
 * exactly when sqrt(mean_post (g - tau)^2) <= c = R_(k) rmspePre, i.e.
 *   tau in m +- sqrt(c^2 - var_post(g))     (m = mean post gap, var_post the population variance).
 * With k = 0 (J + 1 < 1 / (1 - level)) every tau is kept: the bounds are null. When
 * c^2 < var_post(g) no tau is kept: the bounds are null too. Both are warned.
 *
 * A ratio with a pre-period fit of exactly zero is reported as Number.MAX_VALUE (post gap not
 * zero) or 0 (no gap at all), so results stay finite JSON.
 *
 * Warnings (plain words; thresholds are common practice, not theorems): a poor pre-period
 * fit (rmspePre above half the treated unit's pre-period standard deviation); the treated
 * unit above every donor or below every donor in more than half of the pre-periods (no
 * weights can reproduce it); fewer than 19 donors (no p below 0.05 is possible); weights
 * that are not unique; donors left out.
 *
 * Throws EngineError 'invalid_spec' (not exactly one treated unit, a treatment column, fewer
 * than two usable donors, inference "analytic" or "wild_bootstrap"), 'no_pre_periods',
 * 'no_post_periods', 'invalid_input' (the treated unit lacks a matched covariate), and what
 * selectSample throws ('non_positive_log', 'empty_panel', unknown units or periods).
 */
import type { EstimateResult, InferenceResult, Placebo, SyntheticResult } from '../../../shared/engine/result'
import type { Spec } from '../../../shared/engine/spec'
import { EngineError, listSome } from '../errors'
import type { Panel } from '../panel'
import { resolveRoles, selectSample } from '../sample'
import { fitSimplexWeights } from '../synthWeights'

/** Relative slack under which a placebo ratio counts as a tie with the treated one. */
const TIE_SLACK = 1e-9
/** Donors below which the placebo p cannot reach 0.05 (1/(J+1) > 0.05). */
const MIN_DONORS_FOR_005 = 19
/** Common-practice threshold: rmspePre above this share of the treated pre-period SD is a poor fit. */
const POOR_FIT_SHARE = 0.5

/** Synthetic series for one target against donors over all periods, weights fitted on the pre rows. */
export function syntheticSeries(target: Float64Array, donors: Float64Array[], preRows: number[]): { weights: Float64Array; series: Float64Array; unique: boolean } {
  const T = target.length
  if (!preRows.length) throw new EngineError('invalid_input', 'syntheticSeries: no pre-period rows to fit the weights on')
  for (const r of preRows) {
    if (!Number.isInteger(r) || r < 0 || r >= T) throw new EngineError('invalid_input', `syntheticSeries: pre-period row ${r} is outside 0..${T - 1}`)
  }
  donors.forEach((d, j) => {
    if (d.length !== T) throw new EngineError('invalid_input', `syntheticSeries: donor ${j} has ${d.length} rows, the target ${T}`)
  })
  const pick = (src: Float64Array): Float64Array => {
    const out = new Float64Array(preRows.length)
    for (let i = 0; i < preRows.length; i++) out[i] = src[preRows[i]]
    return out
  }
  const fit = fitSimplexWeights(pick(target), donors.map(pick))
  return { weights: fit.weights, series: weightedSeries(donors, fit.weights), unique: fit.unique }
}

/** sum_j w_j donors[j], skipping zero weights. */
function weightedSeries(donors: Float64Array[], w: Float64Array): Float64Array {
  const T = donors.length ? donors[0].length : 0
  const out = new Float64Array(T)
  for (let j = 0; j < donors.length; j++) {
    if (w[j] === 0) continue
    const d = donors[j]
    for (let t = 0; t < T; t++) out[t] += w[j] * d[t]
  }
  return out
}

/** Post/pre RMSPE ratio, finite: a pre-period fit of exactly zero gives MAX_VALUE (or 0 with no post gap). */
export function rmspeRatio(rmspePre: number, rmspePost: number): number {
  if (rmspePre > 0) return rmspePost / rmspePre
  return rmspePost > 0 ? Number.MAX_VALUE : 0
}

/** p = #{units, the treated included, with ratio >= the treated ratio (relative slack 1e-9)} / (J + 1). */
export function ratioRankP(treatedRatio: number, placeboRatios: readonly number[]): number {
  const bar = treatedRatio - TIE_SLACK * Math.abs(treatedRatio)
  let count = 1
  for (const r of placeboRatios) if (r >= bar) count++
  return count / (placeboRatios.length + 1)
}

export interface InversionInterval {
  ciLow: number | null
  ciHigh: number | null
  /** Why the bounds are null: 'too_few' (every tau kept) or 'empty' (no tau kept). */
  unbounded: 'too_few' | 'empty' | null
}

/**
 * Test inversion of the ratio rank (module comment): the taus whose shifted treated ratio
 * keeps p(tau) > 1 - level. `postGaps` are the treated unit's post-period gaps.
 */
export function inversionInterval(postGaps: Float64Array, rmspePre: number, placeboRatios: readonly number[], level: number): InversionInterval {
  const J = placeboRatios.length
  let k = 0
  while (k <= J && (1 + k) / (J + 1) <= 1 - level) k++
  if (k === 0) return { ciLow: null, ciHigh: null, unbounded: 'too_few' }
  const sorted = [...placeboRatios].sort((a, b) => b - a)
  const c = sorted[k - 1] * rmspePre
  const n = postGaps.length
  let m = 0
  for (let t = 0; t < n; t++) m += postGaps[t]
  m /= n
  let v = 0
  for (let t = 0; t < n; t++) v += (postGaps[t] - m) ** 2
  v /= n
  const room = c * c - v
  if (!(room >= 0) || !Number.isFinite(room)) return { ciLow: null, ciHigh: null, unbounded: 'empty' }
  const h = Math.sqrt(room)
  return { ciLow: m - h, ciHigh: m + h, unbounded: null }
}

interface UnitFit {
  weights: Float64Array
  unique: boolean
  gap: Float64Array
  rmspePre: number
  rmspePost: number
  ratio: number
  meanPostGap: number
}

function mean(a: ArrayLike<number>): number {
  let s = 0
  for (let i = 0; i < a.length; i++) s += a[i]
  return s / a.length
}

/** Sample standard deviation (n - 1), 0 for fewer than two values. */
function sampleSd(a: ArrayLike<number>): number {
  if (a.length < 2) return 0
  const m = mean(a)
  let s = 0
  for (let i = 0; i < a.length; i++) s += (a[i] - m) ** 2
  return Math.sqrt(s / (a.length - 1))
}

export function estimateSynthetic(panel: Panel, spec: Spec): EstimateResult {
  const warnings: string[] = []
  const asked = spec.inference.method
  if (asked === 'analytic' || asked === 'wild_bootstrap') {
    throw new EngineError('invalid_spec', `inference.method "${asked}": the weighted comparison supports placebo (permutation) inference only; use "permutation" or "auto"`)
  }
  if (spec.treatmentColumn !== undefined) {
    throw new EngineError('invalid_spec', 'design "synthetic" is defined by one treated unit and a start; it does not take a treatmentColumn')
  }
  if (spec.treated.length !== 1) {
    throw new EngineError(
      'invalid_spec',
      `design "synthetic" compares exactly one treated unit with a weighted comparison: list one unit in treated (got ${spec.treated.length}); for several treated units use "did" or "event_study"`,
    )
  }
  const roles = resolveRoles(panel, spec, { requireTreated: true, requireStart: true })
  const treatedUnit = roles.treated[0]
  const start = roles.start[treatedUnit]
  if (spec.covariates.length) warnings.push(`spec.covariates (${listSome(spec.covariates)}) are not used by the weighted comparison; list columns to match in synthetic.covariates`)
  const sample = selectSample(panel, spec, roles, { columns: [] }, warnings)

  // unit x period matrix of the (transformed) outcome over the sample's periods
  const nP = sample.nPeriods
  const M = new Float64Array(panel.units.length * nP).fill(NaN)
  for (let i = 0; i < sample.n; i++) M[sample.unitPanel[sample.unit[i]] * nP + sample.period[i]] = sample.y[i]
  const periodPanel = new Int32Array(nP)
  for (let i = 0; i < sample.n; i++) periodPanel[sample.period[i]] = panel.period[sample.rows[i]]
  const label = (p: number) => panel.periods[periodPanel[p]].canonical

  // periods: those where the treated unit has an outcome
  const kept: number[] = []
  const lacking: string[] = []
  for (let p = 0; p < nP; p++) {
    if (Number.isNaN(M[treatedUnit * nP + p])) lacking.push(label(p))
    else kept.push(p)
  }
  const treatedName = panel.units[treatedUnit]
  if (lacking.length) warnings.push(`the treated unit "${treatedName}" has no outcome in ${lacking.length} period${lacking.length > 1 ? 's' : ''} (${listSome(lacking)}): ${lacking.length > 1 ? 'those periods are' : 'that period is'} left out`)
  const pre = kept.filter((p) => sample.periodOrdinals[p] < start)
  const post = kept.filter((p) => sample.periodOrdinals[p] >= start)
  const startText = panel.periods.find((q) => q.ordinal === start)?.canonical ?? String(start)
  if (!pre.length) throw new EngineError('no_pre_periods', `no pre-periods: the treated unit "${treatedName}" has no outcome before the start ${startText}${spec.window ? ' within the window' : ''}`)
  if (!post.length) throw new EngineError('no_post_periods', `no post-periods: the treated unit "${treatedName}" has no outcome from the start ${startText} on${spec.window ? ' within the window' : ''}`)
  const periods = [...pre, ...post]
  const nPre = pre.length
  const nAll = periods.length

  // donors with every outcome used
  const missingOutcome: string[] = []
  let donors = roles.comparison.filter((u) => {
    const ok = periods.every((p) => !Number.isNaN(M[u * nP + p]))
    if (!ok) missingOutcome.push(panel.units[u])
    return ok
  })
  if (missingOutcome.length) {
    warnings.push(`left out ${missingOutcome.length} donor${missingOutcome.length > 1 ? 's' : ''} missing an outcome in a period used: ${listSome(missingOutcome, 8)}`)
  }

  // matched covariates: pre-period means per unit
  const covNames = spec.synthetic?.covariates ?? []
  const preOrdinals = new Set(pre.map((p) => sample.periodOrdinals[p]))
  const covMeans = covNames.map((c) => {
    const col = panel.columns[c]
    if (!col) throw new EngineError('unknown_column', `unknown column "${c}" (synthetic.covariates)`)
    const sum = new Float64Array(panel.units.length)
    const cnt = new Float64Array(panel.units.length)
    for (let r = 0; r < panel.nRows; r++) {
      if (!preOrdinals.has(panel.periods[panel.period[r]].ordinal) || Number.isNaN(col[r])) continue
      sum[panel.unit[r]] += col[r]
      cnt[panel.unit[r]]++
    }
    if (!cnt[treatedUnit]) throw new EngineError('invalid_input', `synthetic.covariates: the treated unit "${treatedName}" has no value of "${c}" in the pre-periods, so it cannot be matched; drop it from synthetic.covariates`)
    return Float64Array.from(sum, (s, u) => (cnt[u] ? s / cnt[u] : NaN))
  })
  if (covNames.length) {
    const missingCov: string[] = []
    donors = donors.filter((u) => {
      const ok = covMeans.every((m) => !Number.isNaN(m[u]))
      if (!ok) missingCov.push(panel.units[u])
      return ok
    })
    if (missingCov.length) warnings.push(`left out ${missingCov.length} donor${missingCov.length > 1 ? 's' : ''} with no pre-period value of a matched covariate: ${listSome(missingCov, 8)}`)
  }
  const J = donors.length
  if (J < 2) {
    throw new EngineError(
      'invalid_spec',
      `design "synthetic" needs at least two donors with complete outcomes${covNames.length ? ' and covariates' : ''} (${J} usable of ${roles.comparison.length}); add units to spec.comparison or fill the missing values`,
    )
  }
  const units = [treatedUnit, ...donors]

  // series over the periods used, and the rows the weights match (pre outcomes + covariates)
  const series = units.map((u) => Float64Array.from(periods, (p) => M[u * nP + p]))
  // typical spread of the outcome across units in one pre-period: sqrt(mean_t var_t)
  let spreadSq = 0
  for (let t = 0; t < nPre; t++) spreadSq += sampleSd(series.map((s) => s[t])) ** 2
  const outcomeSpread = Math.sqrt(spreadSq / nPre)
  const covRows: { name: string; values: Float64Array }[] = []
  covNames.forEach((name, k) => {
    const values = Float64Array.from(units, (u) => covMeans[k][u])
    const spread = sampleSd(values)
    if (!(spread > 0)) {
      warnings.push(`synthetic.covariates: "${name}" has the same pre-period mean in every unit, so it cannot help the match; it is not used`)
      return
    }
    const factor = (outcomeSpread > 0 ? outcomeSpread : 1) / spread
    covRows.push({ name, values: Float64Array.from(values, (v) => v * factor) })
  })
  const matchRows = units.map((_, i) => {
    const out = new Float64Array(nPre + covRows.length)
    out.set(series[i].subarray(0, nPre))
    covRows.forEach((c, k) => (out[nPre + k] = c.values[i]))
    return out
  })

  /** Fits unit `target` (index into units) against the pool (indices into units). */
  const fitUnit = (target: number, pool: number[]): UnitFit => {
    const fit = fitSimplexWeights(matchRows[target], pool.map((i) => matchRows[i]))
    const synth = weightedSeries(pool.map((i) => series[i]), fit.weights)
    const y = series[target]
    const gap = Float64Array.from(y, (v, t) => v - synth[t])
    let sPre = 0
    let sPost = 0
    let gPost = 0
    for (let t = 0; t < nAll; t++) {
      if (t < nPre) sPre += gap[t] * gap[t]
      else {
        sPost += gap[t] * gap[t]
        gPost += gap[t]
      }
    }
    const rmspePre = Math.sqrt(sPre / nPre)
    const rmspePost = Math.sqrt(sPost / (nAll - nPre))
    return { weights: fit.weights, unique: fit.unique, gap, rmspePre, rmspePost, ratio: rmspeRatio(rmspePre, rmspePost), meanPostGap: gPost / (nAll - nPre) }
  }

  const donorIdx = donors.map((_, j) => j + 1)
  const main = fitUnit(0, donorIdx)
  const synthTreated = Float64Array.from(series[0], (v, t) => v - main.gap[t])
  const placeboFits = donorIdx.map((i) => fitUnit(i, donorIdx.filter((k) => k !== i)))

  // inference: ratio rank and its inversion
  const level = spec.inference.level
  const placeboRatios = placeboFits.map((f) => f.ratio)
  const p = ratioRankP(main.ratio, placeboRatios)
  const interval = inversionInterval(main.gap.subarray(nPre), main.rmspePre, placeboRatios, level)
  const pMinText = `1/${J + 1} = ${(1 / (J + 1)).toFixed(3)}`
  if (interval.unbounded === 'too_few') {
    warnings.push(
      `with ${J} donors no p below ${pMinText} is possible${J < MIN_DONORS_FOR_005 ? ' (none below 0.05: that needs 19 donors)' : ''}, so no ${Math.round(level * 1000) / 10}% interval can be bounded: add donors or report the gap as descriptive`,
    )
  } else if (J < MIN_DONORS_FOR_005) {
    warnings.push(`only ${J} donors: the placebo p-value cannot go below ${pMinText}, so no p below 0.05 is possible (that needs 19 donors)`)
  }
  if (interval.unbounded === 'empty') {
    warnings.push(`no effect size is consistent with the data at the ${Math.round(level * 1000) / 10}% level (the post-period gap varies more than any placebo's): the interval is empty; the pre-period fit or the donors may not suit this unit`)
  }
  const placebos: Placebo[] = placeboFits.map((f, j) => ({ unit: panel.units[donors[j]], estimate: f.meanPostGap, ratio: f.ratio }))
  const periodTexts = periods.map(label)
  const inference: InferenceResult = {
    method: 'permutation',
    reason:
      asked === 'permutation'
        ? 'weighted comparison, placebo units as the spec asks: every donor in turn gets its own weighted comparison from the other donors, and p is the rank of the post/pre fit ratio'
        : 'weighted comparison: every donor in turn gets its own weighted comparison from the other donors, and p is the rank of the post/pre fit ratio',
    level,
    p,
    ciLow: interval.ciLow,
    ciHigh: interval.ciHigh,
    draws: J,
    enumerated: true,
    weights: null,
    seed: null,
    pRatio: p,
    ratio: main.ratio,
    pMin: 1 / (J + 1),
    placebos,
    gaps: { periods: periodTexts, treated: Array.from(main.gap), placebos: placeboFits.map((f, j) => ({ unit: panel.units[donors[j]], gap: Array.from(f.gap) })) },
  }

  // warnings on the fit
  const treatedPre = series[0].subarray(0, nPre)
  const sdPre = sampleSd(treatedPre)
  if (nPre >= 2 && main.rmspePre > POOR_FIT_SHARE * sdPre) {
    warnings.push(
      `poor pre-period fit: the weighted comparison misses "${treatedName}" by ${main.rmspePre.toPrecision(3)} on average (root mean square), more than half its own pre-period standard deviation (${sdPre.toPrecision(3)}); the post-period gap says little about the policy`,
    )
  }
  let outside = 0
  for (let t = 0; t < nPre; t++) {
    let above = true
    let below = true
    for (let j = 1; j <= J; j++) {
      const v = series[j][t]
      if (v >= treatedPre[t]) above = false
      if (v <= treatedPre[t]) below = false
    }
    if (above || below) outside++
  }
  if (outside * 2 > nPre) {
    warnings.push(`"${treatedName}" lies above every donor or below every donor in ${outside} of ${nPre} pre-periods: no weighted average of the donors can reproduce it; add donors that bracket it or use "did"`)
  }
  if (!main.unique) {
    warnings.push('the weights are not unique: other weights fit the pre-period equally well (for example more donors than pre-periods, or a donor that is a mix of others), and their post-period comparison may differ')
  }
  const notUnique = placeboFits.filter((f) => !f.unique).length
  if (notUnique) warnings.push(`the weights of ${notUnique} placebo donor${notUnique > 1 ? 's are' : ' is'} not unique: their ratios depend on which of equally good weights was found`)

  // result
  const weights: Record<string, number> = {}
  donors.forEach((u, j) => (weights[panel.units[u]] = main.weights[j]))
  const covariateBalance = covRows.length
    ? covRows.map((c) => {
        const k = covNames.indexOf(c.name)
        const raw = Float64Array.from(units, (u) => covMeans[k][u])
        let synth = 0
        for (let j = 0; j < J; j++) synth += main.weights[j] * raw[j + 1]
        return { name: c.name, treated: raw[0], synthetic: synth }
      })
    : null
  const synthetic: SyntheticResult = {
    weights,
    series: periods.map((_, t) => ({ period: periodTexts[t], treated: series[0][t], synthetic: synthTreated[t], gap: main.gap[t] })),
    rmspePre: main.rmspePre,
    rmspePost: main.rmspePost,
    ratio: main.ratio,
    covariateBalance,
  }
  let ssr = 0
  for (let t = 0; t < nPre; t++) ssr += main.gap[t] ** 2
  const mPre = mean(treatedPre)
  let tss = 0
  for (let t = 0; t < nPre; t++) tss += (treatedPre[t] - mPre) ** 2
  return {
    design: spec.design,
    nObs: units.length * nAll,
    nUnits: units.length,
    nPeriods: nAll,
    nClusters: null,
    smallSample: null,
    vcov: 'iid',
    hacLag: null,
    effect: { term: 'gap_mean_post', estimate: main.meanPostGap, se: null, seIid: null, t: null, df: null, p, ciLow: interval.ciLow, ciHigh: interval.ciHigh },
    coefficients: {},
    groupMeans: null,
    eventStudy: null,
    preTrend: null,
    durbinWatson: null,
    fit: {
      ssr,
      sigma: main.rmspePre,
      rSquared: tss > 0 ? 1 - ssr / tss : ssr === 0 ? 1 : 0,
      kFull: supportSize(main.weights),
      kSmallSample: null,
    },
    inference,
    synthetic,
    staggered: null,
    decomposition: null,
    errors: null,
    comparison: null,
    countFit: null,
    warnings,
  }
}

function supportSize(w: Float64Array): number {
  let n = 0
  for (let j = 0; j < w.length; j++) if (w[j] > 0) n++
  return n
}
