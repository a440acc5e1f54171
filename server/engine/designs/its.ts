/**
 * Interrupted time series by segmented regression (Wagner et al. 2002, J Clin Pharm Ther
 * 27:299-309) for one unit:
 *
 *   y_t = b0 + b1 time_t + sum_k (c_k level_kt + d_k slope_kt) + seasons + x_t' g + e_t
 *
 * time = 1..N over consecutive periods (a gap keeps its place in the count); for each break
 * k, level_k = 1 from the break on and slope_k = periods since the break (0 at the break),
 * so c_k is the jump at the break and d_k the change in slope. Several breaks model several
 * interventions (a policy and its later strengthening). Seasonality "month" or "quarter"
 * adds season_2.. dummies (January or Q1 is the reference), read from the dated periods or
 * from its.seasonColumn. Errors: Newey-West (1987) HAC with Bartlett weights 1 - j/(L+1),
 * no N/(N-K) factor, t with N-K df (coefficients carry the 95% interval on that t); L =
 * its.hacLag, or when absent the rule of thumb floor(4 (N/100)^(2/9)) (Newey and West 1994,
 * common practice), said in a warning. Also reports the Durbin-Watson (1950) statistic
 * sum (e_t - e_t-1)^2 / sum e_t^2.
 * Names: intercept, time, level, slope (several breaks: level_1, slope_1, ...), season_k.
 *
 * Comparative ITS (its.comparison "mean" or "synthetic"; controls in interrupted time series:
 * Lopez Bernal, Cummins and Gasparrini 2018, Int J Epidemiol 47:2082-2093): the same model,
 * same terms and names, is fitted to the difference series
 *
 *   d_t = y_treated,t - c_t,
 *
 * where c_t is the per-period mean of the comparison units ("mean"; spec.comparison, default
 * every unit other than the treated one) or their weighted mean with simplex weights fitted
 * on the periods before the first break ("synthetic"; Abadie, Diamond and Hainmueller 2010).
 * level_k and slope_k are then changes relative to the comparison. With "mean" the
 * coefficients equal the treated-by-term interactions of the stacked regression of the
 * treated and comparison-mean series on the terms fully interacted with a treated indicator,
 * and the lag-0 Newey-West SEs equal that regression's CR0 SEs clustered by period. With
 * transform "log" each unit's outcome is logged before the mean is taken. Covariates and
 * the season column are read from the treated unit's rows. A period where the treated unit
 * or any comparison unit lacks the outcome is dropped ("mean", with a warning) or the
 * comparison unit lacking it is left out ("synthetic", with a warning naming it).
 *
 * Count models (its.family "poisson" or "quasipoisson"; Lopez Bernal, Cummins and Gasparrini 2017,
 * Int J Epidemiol 46:348-355, for segmented Poisson regression): the same terms and names on
 * the log scale,
 *
 *   log E[y_t] = log(exposure_t) + b0 + b1 time_t + sum_k (c_k level_kt + d_k slope_kt) + ...
 *
 * fitted by iteratively reweighted least squares (poissonRegression.ts), with the offset
 * log(its.exposure) when given. One series only: a difference of counts is not a count, so a
 * comparison is refused, and so is transform "log" (the model is already on the log scale)
 * and any its.errors but the default (count models here take the counts as independent given
 * the terms; AR(1) or Newey-West errors are not combined with them). Coefficients: se is the
 * model SE, sqrt(diag((X' diag(mu) X)^-1)) for "poisson" and that SE times sqrt(phi), phi =
 * Pearson X2/(N - K), for "quasipoisson" (Wedderburn 1974); seIid is the Poisson SE in both.
 * df = N - K in both, but "poisson" takes p and the 95% bounds from the normal (z = b/se, the
 * likelihood's Wald test; df is then only the residual count), "quasipoisson" from Student t
 * on N - K df (the dispersion is estimated). rateRatio = exp(b) with rateRatioLow/High =
 * exp(ciLow), exp(ciHigh): the Wald 95% bounds on the same reference distribution as p.
 * Result: countFit {dispersion, deviance}; vcov "iid" (model-based); hacLag, errors and
 * durbinWatson null (Durbin-Watson is not defined for a count model's residuals); fit.ssr =
 * Pearson X2, fit.sigma = sqrt(phi), fit.rSquared = 1 - deviance/null deviance.
 *
 * AR(1) errors (its.errors "ar1_ml", "ar1_reml", "prais_winsten"; family "gaussian", one
 * series or a comparison's difference series): generalised least squares with
 * e_t = rho e_(t-1) + a_t, rho by maximum or restricted likelihood or the two-step Prais and
 * Winsten (1954) estimator (ar1Regression.ts), SEs from RSS_R/(N-K) (X'R^-1 X)^-1, t on N - K
 * df. Rows are taken as consecutive periods, so a series with missing periods between its
 * ends is refused. vcov "iid" (the classical covariance of the whitened regression; errors.kind
 * says which AR(1) model), seIid = se, hacLag null, errors {kind, rho}; durbinWatson and
 * residualAcf are those of the whitened residuals (white noise when AR(1) captures the
 * dependence); fit.ssr = RSS_R, fit.sigma = sqrt(RSS_R/(N - K)), fit.rSquared = 1 - sum of
 * squared original-scale residuals / total sum of squares.
 * Newey-West (the default) is as above, with errors {kind: "newey_west", rho: null}.
 *
 * Every run reports residualAcf: autocorrelations r_1..r_L, L = min(24, floor(N/4)) (Box and
 * Jenkins 1976), of the OLS residuals (Newey-West), the whitened residuals (AR(1)) or the
 * Pearson residuals (y - mu)/sqrt(mu) (count models); a series under 50 periods is warned
 * about (common practice: autocorrelation checks need about 50). A lag-1 autocorrelation of
 * those residuals beyond 2/sqrt(N) (the approximate 95% bound for white noise) is warned about
 * for count and AR(1) models, whose SEs rely on it being absent.
 *
 * Throws EngineError 'invalid_spec' (no unit or break, a comparison with no units, fewer than
 * two usable units for "synthetic", seasonality without dated periods or season column; a
 * count family with a comparison, transform "log" or AR(1) errors; its.exposure without a
 * count family), 'no_pre_periods' / 'no_post_periods' (a break at or before the series' first
 * period, or after its last; the message names the break and the series' range),
 * 'invalid_input' (season values outside 1-12 or 1-4; AR(1) errors on a series with missing
 * periods; negative or fractional counts), 'non_positive_log' (transform "log" on values <= 0,
 * a zero or negative exposure), 'bad_period', and what the regression, the count and AR(1)
 * fitters and the weight fit throw ('too_few_observations' for a series too short for the
 * model, 'singular_design', 'not_converged').
 */
import type { Coefficient, EstimateResult } from '../../../shared/engine/result'
import { type Spec, itsOptionsSchema } from '../../../shared/engine/spec'
import { PeriodError, seasonOf } from '../../../shared/utils/periods'
import { type Ar1Method, fitAr1, residualAutocorrelation } from '../ar1Regression'
import type { Matrix } from 'ml-matrix'
import { normalQuantileAt, pTwoSidedNormal, pTwoSidedT, tQuantileAt } from '../distributions'
import { EngineError, listSome } from '../errors'
import { type Panel, periodLabel, periodOrdinal, unitIndices } from '../panel'
import { Z975, exposureOffset, fitPoisson, rateRatio } from '../poissonRegression'
import { type CovarianceRequest, type ModelFit, type Term, coefficientTable, fitLinearModel } from '../regression'
import { makeResult } from '../report'
import { type Roles, type Sample, resolveRoles, selectSample } from '../sample'
import { syntheticSeries } from './synthetic'

type ItsOptions = NonNullable<Spec['its']>
type ComparisonKind = ItsOptions['comparison']

/** Durbin-Watson statistic of residuals in time order. */
export function durbinWatson(e: Float64Array): number {
  let num = 0
  let den = e[0] * e[0]
  for (let t = 1; t < e.length; t++) {
    num += (e[t] - e[t - 1]) ** 2
    den += e[t] * e[t]
  }
  return num / den
}

function itsUnit(panel: Panel, spec: Spec, kind: ComparisonKind): number {
  if (spec.treated.length === 1) return unitIndices(panel, spec.treated, 'treated')[0]
  if (kind !== 'none') {
    throw new EngineError('invalid_spec', `design "its" with its.comparison "${kind}" compares one treated unit with the others: list exactly one unit in treated (got ${spec.treated.length})`)
  }
  if (spec.treated.length === 0 && panel.units.length === 1) return 0
  throw new EngineError('invalid_spec', `design "its" models one unit: list exactly one unit in treated (got ${spec.treated.length}${spec.treated.length ? '' : `, and the panel has ${panel.units.length} units`}); for several units use "did"`)
}

/** The comparison units (panel indices): spec.comparison, or every unit but the treated one. */
function comparisonPool(panel: Panel, spec: Spec, unit: number, kind: ComparisonKind): number[] {
  const pool = spec.comparison ? unitIndices(panel, spec.comparison, 'comparison').filter((u) => u !== unit) : [...panel.units.keys()].filter((u) => u !== unit)
  if (pool.length === 0) {
    const why = spec.comparison ? 'spec.comparison lists no unit' : 'the panel has no unit besides the treated one'
    throw new EngineError('invalid_spec', `its.comparison "${kind}" needs comparison units, but ${why}; list them in spec.comparison, or use its.comparison "none" for the treated unit alone`)
  }
  return [...new Set(pool)].sort((a, b) => a - b)
}

/** Outcome of each pool unit by panel period index (NaN where absent or missing). */
function outcomeTable(panel: Panel, spec: Spec, pool: number[]): Float64Array[] {
  const slot = new Int32Array(panel.units.length).fill(-1)
  pool.forEach((u, k) => (slot[u] = k))
  const table = pool.map(() => new Float64Array(panel.periods.length).fill(NaN))
  const y = panel.columns[spec.outcome]
  for (let r = 0; r < panel.nRows; r++) {
    const k = slot[panel.unit[r]]
    if (k >= 0) table[k][panel.period[r]] = y[r]
  }
  return table
}

/** A comparison unit's outcome in one period after the spec's transform. */
function transformed(panel: Panel, spec: Spec, unit: number, period: number, v: number): number {
  if (spec.transform !== 'log') return v
  if (!(v > 0)) {
    throw new EngineError(
      'non_positive_log',
      `transform "log": comparison unit "${panel.units[unit]}" has outcome ${v} in period ${panel.periods[period].canonical}, which has no logarithm; use transform "level" or leave that unit out of spec.comparison`,
    )
  }
  return Math.log(v)
}

interface Comparison {
  sample: Sample
  /** The comparison series c_t per sample row. */
  values: Float64Array
  result: NonNullable<EstimateResult['comparison']>
}

/**
 * "mean": the treated unit's rows in periods where every comparison unit has the outcome, and
 * the per-period mean of the comparison units there.
 */
function meanComparison(panel: Panel, spec: Spec, roles: Roles, columns: string[], pool: number[], warnings: string[]): Comparison {
  const table = outcomeTable(panel, spec, pool)
  const nP = panel.periods.length
  const complete = new Uint8Array(nP)
  for (let p = 0; p < nP; p++) complete[p] = table.every((col) => !Number.isNaN(col[p])) ? 1 : 0
  const outcome = panel.columns[spec.outcome]
  let dropped = 0
  const lacking = new Set<number>()
  const keep = (r: number): boolean => {
    const p = panel.period[r]
    if (complete[p]) return true
    if (!Number.isNaN(outcome[r])) {
      dropped++
      table.forEach((col, k) => Number.isNaN(col[p]) && lacking.add(pool[k]))
    }
    return false
  }
  let sample: Sample
  try {
    sample = selectSample(panel, spec, roles, { columns, keep }, warnings)
  } catch (e) {
    if (e instanceof EngineError && e.code === 'empty_panel' && dropped) {
      throw new EngineError('empty_panel', `its.comparison "mean": no period has the outcome for the treated unit and every comparison unit (${listSome([...lacking].map((u) => panel.units[u]))} lack values); narrow spec.comparison`)
    }
    throw e
  }
  if (dropped) {
    const names = [...lacking].sort((a, b) => a - b).map((u) => panel.units[u])
    warnings.push(`dropped ${dropped} period${dropped > 1 ? 's' : ''} where a comparison unit has no outcome value (${listSome(names)}): the difference series needs the treated unit and every comparison unit in each period`)
  }
  const values = new Float64Array(sample.n)
  for (let i = 0; i < sample.n; i++) {
    const p = panel.period[sample.rows[i]]
    let s = 0
    for (let k = 0; k < pool.length; k++) s += transformed(panel, spec, pool[k], p, table[k][p])
    values[i] = s / pool.length
  }
  return { sample, values, result: { kind: 'mean', units: pool.map((u) => panel.units[u]), weights: null } }
}

/**
 * "synthetic": comparison units missing the outcome in any period of the treated unit's
 * series are left out (named in a warning); the others get simplex weights fitted on the rows
 * before the first break.
 */
function syntheticComparison(panel: Panel, spec: Spec, sample: Sample, pool: number[], firstBreak: number, warnings: string[]): Comparison {
  const table = outcomeTable(panel, spec, pool)
  const left: string[] = []
  const donors: number[] = []
  const series: Float64Array[] = []
  table.forEach((col, k) => {
    let missing = 0
    for (let i = 0; i < sample.n; i++) if (Number.isNaN(col[panel.period[sample.rows[i]]])) missing++
    if (missing) {
      left.push(`"${panel.units[pool[k]]}" (${missing} of ${sample.n} periods missing)`)
      return
    }
    donors.push(pool[k])
    series.push(Float64Array.from(sample.rows, (r) => transformed(panel, spec, pool[k], panel.period[r], col[panel.period[r]])))
  })
  if (left.length) {
    const shown = left.slice(0, 5).join(', ') + (left.length > 5 ? ` and ${left.length - 5} more` : '')
    warnings.push(`left out ${left.length} comparison unit${left.length > 1 ? 's' : ''} with missing outcome values in the treated unit's periods: ${shown}; the weighted comparison needs complete series`)
  }
  if (donors.length < 2) {
    throw new EngineError(
      'invalid_spec',
      `its.comparison "synthetic" needs at least two comparison units with complete outcomes to weight (${donors.length} usable of ${pool.length}); add units to spec.comparison or use its.comparison "mean"`,
    )
  }
  const preRows: number[] = []
  for (let i = 0; i < sample.n; i++) if (sample.ordinal[i] < firstBreak) preRows.push(i)
  let outside = 0
  for (const i of preRows) {
    const above = series.every((s) => sample.y[i] > s[i])
    const below = series.every((s) => sample.y[i] < s[i])
    if (above || below) outside++
  }
  if (outside * 2 > preRows.length) {
    warnings.push(
      `the treated unit lies above or below every comparison unit in ${outside} of the ${preRows.length} periods before the first break: no weighted mean of them can reproduce its level, so the weights go to the nearest units; the level gap stays in the intercept, but consider its.comparison "mean"`,
    )
  }
  const fit = syntheticSeries(sample.y, series, preRows)
  if (!fit.unique) warnings.push('the comparison weights are not unique: other mixtures of the comparison units fit the periods before the first break equally well, and the estimates depend on which one is used')
  const weights: Record<string, number> = {}
  donors.forEach((u, k) => (weights[panel.units[u]] = fit.weights[k]))
  return { sample, values: fit.series, result: { kind: 'synthetic', units: donors.map((u) => panel.units[u]), weights } }
}

interface Break {
  value: string | number
  ordinal: number
}

/** Breaks sorted by time; each must leave rows before the first and on or after the last. */
function checkBreaks(panel: Panel, sample: Sample, breaks: Break[]): void {
  const first = sample.ordinal[0]
  const last = sample.ordinal[sample.n - 1]
  const range = `the series runs from ${periodLabel(panel, first)} to ${periodLabel(panel, last)}`
  const b0 = breaks[0]
  if (b0.ordinal <= first) {
    throw new EngineError('no_pre_periods', `no pre-periods: the first break ${b0.value} is not after the first period of the series (${range}); a break must come on or after the second period`)
  }
  const bl = breaks[breaks.length - 1]
  if (bl.ordinal > last) {
    throw new EngineError('no_post_periods', `no post-periods: the break ${bl.value} comes after the last period of the series (${range}); a break must come no later than the last period`)
  }
}

function seasonTerms(panel: Panel, sample: Sample, its: ItsOptions): Term[] {
  if (its.seasonality === 'none') return []
  const nSeasons = its.seasonality === 'month' ? 12 : 4
  const n = sample.n
  const season = new Int32Array(n)
  const col = its.seasonColumn ? sample.column(its.seasonColumn) : null
  for (let i = 0; i < n; i++) {
    let s: number
    if (col) s = col[i]
    else {
      try {
        s = seasonOf(panel.periods[panel.period[sample.rows[i]]], its.seasonality)
      } catch (e) {
        if (!(e instanceof PeriodError)) throw e
        throw new EngineError('invalid_spec', `its.seasonality "${its.seasonality}" needs dated periods (${its.seasonality === 'month' ? 'months or days' : 'quarters, months or days'}) or its.seasonColumn naming a column with the ${its.seasonality} number; the periods here are ${panel.frequency}s`)
      }
    }
    if (!Number.isInteger(s) || s < 1 || s > nSeasons) {
      const where = `${panel.lineLabel} ${panel.line[sample.rows[i]]}`
      throw new EngineError('invalid_input', `${where}, column "${its.seasonColumn}": season ${s} is not a ${its.seasonality} number 1-${nSeasons}`)
    }
    season[i] = s
  }
  const terms: Term[] = []
  for (let s = 2; s <= nSeasons; s++) {
    const d = new Float64Array(n)
    let any = false
    for (let i = 0; i < n; i++) {
      if (season[i] === s) {
        d[i] = 1
        any = true
      }
    }
    if (any) terms.push({ name: `season_${s}`, values: d })
  }
  return terms
}

/** time, level/slope per break, seasons and covariates over the sample rows. */
function segmentedTerms(panel: Panel, spec: Spec, its: ItsOptions, sample: Sample, breaks: Break[]): Term[] {
  const n = sample.n
  const first = sample.ordinal[0]
  const time = new Float64Array(n)
  for (let i = 0; i < n; i++) time[i] = sample.ordinal[i] - first + 1
  const terms: Term[] = [{ name: 'time', values: time }]
  const several = breaks.length > 1
  breaks.forEach(({ ordinal: b }, k) => {
    const level = new Float64Array(n)
    const slope = new Float64Array(n)
    for (let i = 0; i < n; i++) {
      if (sample.ordinal[i] >= b) {
        level[i] = 1
        slope[i] = sample.ordinal[i] - b
      }
    }
    terms.push({ name: several ? `level_${k + 1}` : 'level', values: level }, { name: several ? `slope_${k + 1}` : 'slope', values: slope })
  })
  terms.push(...seasonTerms(panel, sample, its))
  for (const c of spec.covariates) terms.push({ name: c, values: sample.column(c) })
  return terms
}

type Family = ItsOptions['family']
type ErrorsKind = ItsOptions['errors']

const AR1_METHOD: Record<Exclude<ErrorsKind, 'newey_west'>, Ar1Method> = { ar1_ml: 'ml', ar1_reml: 'reml', prais_winsten: 'prais_winsten' }

/** Refuses combinations of family, errors, exposure, comparison and transform that do not fit together. */
function checkModelOptions(spec: Spec, its: ItsOptions): void {
  const family = its.family
  if (family === 'gaussian') {
    if (its.exposure !== undefined) {
      throw new EngineError(
        'invalid_spec',
        `its.exposure "${its.exposure}" is the offset of a count model, but its.family is "gaussian"; set its.family "poisson" or "quasipoisson" with the count as the outcome, or drop its.exposure (for a rate, put the rate itself as the outcome)`,
      )
    }
    return
  }
  if (its.comparison !== 'none') {
    throw new EngineError(
      'invalid_spec',
      `its.family "${family}" models the counts of one series, but its.comparison is "${its.comparison}": a difference of counts is not a count; use its.comparison "none", or its.family "gaussian" for the difference series (with transform "log" to compare rates)`,
    )
  }
  if (spec.transform === 'log') {
    throw new EngineError('invalid_spec', `transform "log" with its.family "${family}": the count model already works on the log scale (its coefficients are log rate ratios); use transform "level" with the counts as the outcome`)
  }
  if (its.errors !== 'newey_west') {
    throw new EngineError(
      'invalid_spec',
      `its.errors "${its.errors}" with its.family "${family}": AR(1) errors are not combined with count models here; use its.family "gaussian" for AR(1) errors, or the count model alone (its.family "quasipoisson" allows for overdispersion) and check its residual autocorrelations`,
    )
  }
}

/** Missing periods between the series' ends: how many, and the first one. */
function gapsOf(panel: Panel, sample: Sample): { missing: number; first: string | null } {
  const n = sample.n
  const missing = sample.ordinal[n - 1] - sample.ordinal[0] + 1 - n
  for (let i = 1; i < n; i++) if (sample.ordinal[i] !== sample.ordinal[i - 1] + 1) return { missing, first: periodLabel(panel, sample.ordinal[i - 1] + 1) }
  return { missing, first: null }
}

/** Autocorrelations r_1..r_L of residuals in time order, L = min(24, floor(N/4)); null below 4 rows. */
function acfOf(e: Float64Array): number[] | null {
  const maxLag = Math.min(24, Math.floor(e.length / 4))
  return maxLag >= 1 ? residualAutocorrelation(e, maxLag) : null
}

/** What one of the three error models hands back for the result. */
interface ItsModel {
  fit: ModelFit
  covariance: CovarianceRequest
  coefficients: Record<string, Coefficient>
  /** The residuals whose autocorrelations are reported. */
  residuals: Float64Array
  durbinWatson: number | null
  hacLag: number | null
  errors: EstimateResult['errors']
  countFit: EstimateResult['countFit']
}

function totalSumOfSquares(y: Float64Array): number {
  let m = 0
  for (let i = 0; i < y.length; i++) m += y[i]
  m /= y.length
  let s = 0
  for (let i = 0; i < y.length; i++) s += (y[i] - m) ** 2
  return s
}

function neweyWestModel(y: Float64Array, terms: Term[], its: ItsOptions, n: number, warnings: string[]): ItsModel {
  let lag = its.hacLag
  if (lag === undefined) {
    lag = Math.floor(4 * (n / 100) ** (2 / 9))
    warnings.push(`Newey-West errors use a lag of ${lag} period${lag === 1 ? '' : 's'} (the usual rule of thumb for a series of ${n} periods); set its.hacLag to choose another`)
  }
  const covariance = { kind: 'hac' as const, lag }
  const fit = fitLinearModel({ y, terms, intercept: true, covariance })
  if (n < 24) warnings.push(`only ${n} periods: segmented regression with Newey-West errors needs a long series to be reliable (common practice: at least 24 periods)`)
  return {
    fit,
    covariance,
    coefficients: coefficientTable(fit),
    residuals: fit.residuals,
    durbinWatson: durbinWatson(fit.residuals),
    hacLag: lag,
    errors: { kind: 'newey_west', rho: null },
    countFit: null,
  }
}

function ar1Model(y: Float64Array, terms: Term[], kind: Exclude<ErrorsKind, 'newey_west'>): ItsModel {
  const n = y.length
  const names = ['intercept', ...terms.map((t) => t.name)]
  const columns = [new Float64Array(n).fill(1), ...terms.map((t) => t.values)]
  const ar = fitAr1(y, columns, names, AR1_METHOD[kind])
  let ssr = 0
  for (const a of ar.innovations) ssr += a * a
  let rawSsr = 0
  for (const e of ar.residuals) rawSsr += e * e
  const tss = totalSumOfSquares(y)
  const fit: ModelFit = {
    names: ar.names,
    beta: ar.beta,
    vcov: ar.vcov,
    vcovIid: ar.vcov,
    df: ar.dfResidual,
    dfIid: ar.dfResidual,
    nObs: n,
    nClusters: null,
    kFull: names.length,
    kSmallSample: null,
    ssr,
    rSquared: tss > 0 ? 1 - rawSsr / tss : NaN,
    residuals: ar.innovations,
    converged: true,
  }
  return {
    fit,
    covariance: { kind: 'iid' },
    coefficients: coefficientTable(fit),
    residuals: ar.innovations,
    durbinWatson: durbinWatson(ar.innovations),
    hacLag: null,
    errors: { kind, rho: ar.rho },
    countFit: null,
  }
}

function countModel(panel: Panel, sample: Sample, terms: Term[], its: ItsOptions, family: Exclude<Family, 'gaussian'>, warnings: string[]): ItsModel {
  const n = sample.n
  const labels = Array.from(sample.rows, (r) => `period ${panel.periods[panel.period[r]].canonical}`)
  const offset = its.exposure ? exposureOffset(sample.column(its.exposure), `exposure "${its.exposure}"`, labels) : undefined
  const names = ['intercept', ...terms.map((t) => t.name)]
  const columns = [new Float64Array(n).fill(1), ...terms.map((t) => t.values)]
  const pf = fitPoisson(sample.y, columns, names, offset, { rowLabels: labels })
  const quasi = family === 'quasipoisson'
  const k = names.length
  const df = pf.dfResidual
  const critical = quasi ? tQuantileAt(0.975, df) : Z975
  const coefficients: Record<string, Coefficient> = {}
  names.forEach((name, j) => {
    const b = pf.beta[j]
    const se = quasi ? pf.seQuasi[j] : pf.se[j]
    const t = b / se
    const rr = rateRatio(b, se, critical)
    coefficients[name] = {
      estimate: b,
      rateRatio: rr.rateRatio,
      rateRatioLow: rr.low,
      rateRatioHigh: rr.high,
      se,
      seIid: pf.se[j],
      df,
      t,
      p: quasi ? pTwoSidedT(t, df) : pTwoSidedNormal(t),
      ciLow: b - critical * se,
      ciHigh: b + critical * se,
    }
  })
  const pearson = Float64Array.from(pf.mu, (m, i) => (sample.y[i] - m) / Math.sqrt(m))
  const fit: ModelFit = {
    names: pf.names,
    beta: pf.beta,
    vcov: quasi ? pf.vcov.clone().mul(pf.dispersion) : pf.vcov,
    vcovIid: pf.vcov,
    df,
    dfIid: df,
    nObs: n,
    nClusters: null,
    kFull: k,
    kSmallSample: null,
    ssr: pf.pearsonChi2,
    rSquared: pf.nullDeviance > 0 ? 1 - pf.deviance / pf.nullDeviance : NaN,
    residuals: pearson,
    converged: true,
  }
  // common practice: a Pearson dispersion well above 1 means Poisson SEs are too small
  if (!quasi && pf.dispersion > 1.5) {
    warnings.push(`the counts vary ${pf.dispersion.toFixed(2)} times as much as a Poisson model allows (Pearson dispersion ${pf.dispersion.toFixed(2)}), so the Poisson standard errors are too small; use its.family "quasipoisson"`)
  }
  if (its.hacLag !== undefined) warnings.push(`its.hacLag ${its.hacLag} is ignored: count models have no Newey-West errors`)
  return {
    fit,
    covariance: { kind: 'iid' },
    coefficients,
    residuals: pearson,
    durbinWatson: null,
    hacLag: null,
    errors: null,
    countFit: { dispersion: pf.dispersion, deviance: pf.deviance },
  }
}

export function estimateIts(panel: Panel, spec: Spec): EstimateResult {
  const warnings: string[] = []
  const its = spec.its ?? itsOptionsSchema.parse({})
  checkModelOptions(spec, its)
  const kind = its.comparison
  const unit = itsUnit(panel, spec, kind)
  const pool = kind === 'none' ? [] : comparisonPool(panel, spec, unit, kind)
  const roles = resolveRoles(panel, { ...spec, treated: [panel.units[unit]], comparison: [] }, { requireTreated: true, requireStart: false })
  const breakValues = its.breaks ?? (spec.start !== undefined && typeof spec.start !== 'object' ? [spec.start] : spec.window ? [spec.window.post[0]] : [])
  if (!breakValues.length) throw new EngineError('invalid_spec', 'design "its" needs a break: set its.breaks or spec.start')
  const breaks: Break[] = breakValues.map((value, k) => ({ value, ordinal: periodOrdinal(panel, value, `its.breaks[${k}]`) })).sort((a, b) => a.ordinal - b.ordinal)
  const columns = [...spec.covariates, ...(its.seasonColumn ? [its.seasonColumn] : []), ...(its.exposure ? [its.exposure] : [])]

  let sample: Sample
  let y: Float64Array
  let comparison: Comparison | null = null
  if (kind === 'mean') {
    comparison = meanComparison(panel, spec, roles, columns, pool, warnings)
    sample = comparison.sample
    checkBreaks(panel, sample, breaks)
  } else {
    sample = selectSample(panel, spec, roles, { columns }, warnings)
    checkBreaks(panel, sample, breaks)
    if (kind === 'synthetic') comparison = syntheticComparison(panel, spec, sample, pool, breaks[0].ordinal, warnings)
  }
  if (comparison) {
    y = new Float64Array(sample.n)
    for (let i = 0; i < sample.n; i++) y[i] = sample.y[i] - comparison.values[i]
  } else y = sample.y
  const n = sample.n
  const errorsKind = its.errors
  const family = its.family
  const gaps = gapsOf(panel, sample)
  if (gaps.missing) {
    const count = `${gaps.missing} missing period${gaps.missing > 1 ? 's' : ''}`
    if (errorsKind !== 'newey_west') {
      throw new EngineError(
        'invalid_input',
        `its.errors "${errorsKind}" takes the rows as consecutive periods, but the series has ${count} between its ends (the first: ${gaps.first}); fill in the missing values, shorten the series to an unbroken stretch, or use its.errors "newey_west"`,
      )
    }
    const treats = family === 'gaussian' ? 'the Newey-West errors treat' : 'the residual autocorrelations treat'
    warnings.push(`the series has ${count} between its ends: time counts them, but ${treats} neighbouring rows as adjacent`)
  }

  const terms = segmentedTerms(panel, spec, its, sample, breaks)
  let model: ItsModel
  if (family !== 'gaussian') model = countModel(panel, sample, terms, its, family, warnings)
  else if (errorsKind !== 'newey_west') {
    model = ar1Model(y, terms, errorsKind)
    if (its.hacLag !== undefined) warnings.push(`its.hacLag ${its.hacLag} is ignored: its.errors "${errorsKind}" models the autocorrelation instead of Newey-West errors`)
  } else model = neweyWestModel(y, terms, its, n, warnings)

  const residualAcf = acfOf(model.residuals)
  if (n < 50) warnings.push(`only ${n} periods: ${model.durbinWatson === null ? 'residual autocorrelation checks are' : 'the Durbin-Watson statistic and residual autocorrelations are'} unreliable on a series this short (common practice: about 50 periods or more)`)
  const bound = 2 / Math.sqrt(n)
  if (residualAcf && model.errors?.kind !== 'newey_west' && Math.abs(residualAcf[0]) > bound) {
    const what =
      family !== 'gaussian'
        ? `the Pearson residuals of the count model are autocorrelated (lag 1: ${residualAcf[0].toFixed(2)}, beyond the rough 95% bound of ${bound.toFixed(2)} for independent errors): its standard errors take the counts as independent and are likely too small`
        : `the whitened residuals are still autocorrelated (lag 1: ${residualAcf[0].toFixed(2)}, beyond the rough 95% bound of ${bound.toFixed(2)}): AR(1) errors do not capture all the dependence, so the standard errors may be too small; compare with its.errors "newey_west"`
    warnings.push(what)
  }

  const term = breaks.length > 1 ? 'level_1' : 'level'
  const reported = comparison ? { ...sample, nUnits: 1 + comparison.result.units.length } : sample
  const result = makeResult(
    spec,
    reported,
    model.fit,
    model.covariance,
    { term, ...model.coefficients[term] },
    { durbinWatson: model.durbinWatson, hacLag: model.hacLag, comparison: comparison?.result ?? null, errors: model.errors, countFit: model.countFit },
    warnings,
  )
  result.coefficients = model.coefficients
  result.residualAcf = residualAcf
  const level = spec.inference?.level ?? 0.95
  const band = { names: model.fit.names, vcov: model.fit.vcov, critical: family === 'poisson' ? normalQuantileAt(0.5 + level / 2) : tQuantileAt(0.5 + level / 2, model.fit.df) }
  result.itsSeries = fittedSeries(panel, sample, y, terms, model.coefficients, family !== 'gaussian' && its.exposure ? sample.column(its.exposure) : null, family !== 'gaussian', band)
  return result
}

/** What the counterfactual band needs: the coefficient names in vcov order, the model's covariance and the critical value. */
interface BandInput {
  names: string[]
  vcov: Matrix
  critical: number
}

const CHANGE_TERM = /^(level|slope)(_\d+)?$/

/**
 * Observed, fitted and counterfactual series for the chart: fitted = the model's prediction;
 * counterfactual = the same without the level and slope terms, i.e. the pre-period trend
 * (and seasons) projected past every break. Count models: exp of the linear predictor plus
 * the log exposure.
 *
 * The counterfactual band is the pointwise interval of the linear predictor x'b at the row x
 * with every level and slope term set to 0:
 *
 *   x'b -/+ c sqrt(x' V x)
 *
 * with V the model's covariance (Newey-West, AR(1) GLS, or the Poisson / quasi-Poisson one on
 * the log scale) and c the quantile at the spec's inference.level (Student t on the model's
 * df; the normal for "poisson"). Count models transform both ends with exp (plus the log
 * exposure), so the band is on the count scale and not symmetric. It describes the
 * uncertainty of the projected pre-period trend only, not of a new observation.
 */
function fittedSeries(panel: Panel, sample: Sample, y: Float64Array, terms: Term[], coefficients: Record<string, { estimate: number }>, exposure: Float64Array | null, count: boolean, band: BandInput) {
  const b0 = coefficients.intercept?.estimate ?? 0
  const out: NonNullable<EstimateResult['itsSeries']> = []
  const byName = new Map(terms.map((t) => [t.name, t.values]))
  const k = band.names.length
  const x = new Float64Array(k)
  const back = (eta: number, offset: number) => (count ? Math.exp(eta + offset) : eta)
  for (let i = 0; i < sample.n; i++) {
    let fitted = b0
    let counterfactual = b0
    for (const t of terms) {
      const v = (coefficients[t.name]?.estimate ?? 0) * t.values[i]
      fitted += v
      if (!CHANGE_TERM.test(t.name)) counterfactual += v
    }
    band.names.forEach((name, j) => (x[j] = name === 'intercept' ? 1 : CHANGE_TERM.test(name) ? 0 : (byName.get(name)?.[i] ?? 0)))
    let q = 0
    for (let a = 0; a < k; a++) for (let c = 0; c < k; c++) q += x[a] * band.vcov.get(a, c) * x[c]
    const half = band.critical * Math.sqrt(Math.max(q, 0))
    const offset = exposure ? Math.log(exposure[i]) : 0
    const ok = Number.isFinite(half)
    out.push({
      period: periodLabel(panel, sample.ordinal[i]),
      observed: y[i],
      fitted: back(fitted, offset),
      counterfactual: back(counterfactual, offset),
      counterfactualLow: ok ? back(counterfactual - half, offset) : null,
      counterfactualHigh: ok ? back(counterfactual + half, offset) : null,
      ...(exposure ? { exposure: exposure[i] } : {}),
    })
  }
  return out
}
