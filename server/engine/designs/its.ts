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
 * Throws EngineError 'invalid_spec' (no unit or break, a comparison with no units, fewer than
 * two usable units for "synthetic", seasonality without dated periods or season column),
 * 'no_pre_periods' / 'no_post_periods' (a break at or before the series' first period, or
 * after its last; the message names the break and the series' range), 'invalid_input'
 * (season values outside 1-12 or 1-4), 'bad_period', 'non_positive_log', 'not_available'
 * (count families, AR(1) errors and exposure, still to be wired in), and what the regression
 * and the weight fit throw.
 */
import type { EstimateResult } from '../../../shared/engine/result'
import { type Spec, itsOptionsSchema } from '../../../shared/engine/spec'
import { PeriodError, seasonOf } from '../../../shared/utils/periods'
import { EngineError, listSome } from '../errors'
import { type Panel, periodLabel, periodOrdinal, unitIndices } from '../panel'
import { type Term, coefficientOf, fitLinearModel } from '../regression'
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

export function estimateIts(panel: Panel, spec: Spec): EstimateResult {
  const warnings: string[] = []
  const its = spec.its ?? itsOptionsSchema.parse({})
  if (its.family !== 'gaussian' || its.errors !== 'newey_west' || its.exposure !== undefined) {
    const asked = its.family !== 'gaussian' ? `its.family "${its.family}"` : its.errors !== 'newey_west' ? `its.errors "${its.errors}"` : 'its.exposure'
    throw new EngineError('not_available', `${asked} is not available yet in design "its"; use its.family "gaussian" with its.errors "newey_west"`)
  }
  const kind = its.comparison
  const unit = itsUnit(panel, spec, kind)
  const pool = kind === 'none' ? [] : comparisonPool(panel, spec, unit, kind)
  const roles = resolveRoles(panel, { ...spec, treated: [panel.units[unit]], comparison: [] }, { requireTreated: true, requireStart: false })
  const breakValues = its.breaks ?? (spec.start !== undefined && typeof spec.start !== 'object' ? [spec.start] : spec.window ? [spec.window.post[0]] : [])
  if (!breakValues.length) throw new EngineError('invalid_spec', 'design "its" needs a break: set its.breaks or spec.start')
  const breaks: Break[] = breakValues.map((value, k) => ({ value, ordinal: periodOrdinal(panel, value, `its.breaks[${k}]`) })).sort((a, b) => a.ordinal - b.ordinal)
  const columns = [...spec.covariates, ...(its.seasonColumn ? [its.seasonColumn] : [])]

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
  const span = sample.ordinal[n - 1] - sample.ordinal[0] + 1
  if (span !== n) warnings.push(`the series has ${span - n} missing period${span - n > 1 ? 's' : ''} between its ends: time counts them, but the Newey-West errors treat neighbouring rows as adjacent`)

  const terms = segmentedTerms(panel, spec, its, sample, breaks)
  let lag = its.hacLag
  if (lag === undefined) {
    lag = Math.floor(4 * (n / 100) ** (2 / 9))
    warnings.push(`Newey-West errors use a lag of ${lag} period${lag === 1 ? '' : 's'} (the usual rule of thumb for a series of ${n} periods); set its.hacLag to choose another`)
  }
  const covariance = { kind: 'hac' as const, lag }
  const fit = fitLinearModel({ y, terms, intercept: true, covariance })
  if (n < 24) warnings.push(`only ${n} periods: segmented regression with Newey-West errors needs a long series to be reliable (common practice: at least 24 periods)`)
  const term = breaks.length > 1 ? 'level_1' : 'level'
  const reported = comparison ? { ...sample, nUnits: 1 + comparison.result.units.length } : sample
  return makeResult(spec, reported, fit, covariance, { term, ...coefficientOf(fit, term) }, { durbinWatson: durbinWatson(fit.residuals), hacLag: lag, comparison: comparison?.result ?? null }, warnings)
}
