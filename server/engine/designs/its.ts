/**
 * Interrupted time series by segmented regression (Wagner et al. 2002, J Clin Pharm Ther
 * 27:299-309) for one unit:
 *
 *   y_t = b0 + b1 time_t + sum_k (c_k level_kt + d_k slope_kt) + seasons + x_t' g + e_t
 *
 * time = 1..N over consecutive periods (a gap keeps its place in the count); for each break
 * k, level_k = 1 from the break on and slope_k = periods since the break (0 at the break),
 * so c_k is the jump at the break and d_k the change in slope. Seasonality "month" or
 * "quarter" adds season_2.. dummies (January or Q1 is the reference), read from the dated
 * periods or from its.seasonColumn. Errors: Newey-West (1987) HAC with Bartlett weights
 * 1 - j/(L+1), no N/(N-K) factor, t with N-K df; L = its.hacLag, or when absent the rule
 * of thumb floor(4 (N/100)^(2/9)) (Newey and West 1994), said in a warning. Also reports
 * the Durbin-Watson (1950) statistic sum (e_t - e_t-1)^2 / sum e_t^2.
 * Names: intercept, time, level, slope (several breaks: level_1, slope_1, ...), season_k.
 *
 * Throws EngineError 'invalid_spec' (no unit or break), 'no_pre_periods', 'no_post_periods',
 * 'invalid_input' (season values outside 1-12 or 1-4), 'bad_period', and what the
 * regression throws.
 */
import type { EstimateResult } from '../../../shared/engine/result'
import { type Spec, itsOptionsSchema } from '../../../shared/engine/spec'
import { seasonOf } from '../../../shared/utils/periods'
import { EngineError } from '../errors'
import { type Panel, periodOrdinal, unitIndices } from '../panel'
import { type Term, coefficientOf, fitLinearModel } from '../regression'
import { makeResult } from '../report'
import { resolveRoles, selectSample } from '../sample'

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

function itsUnit(panel: Panel, spec: Spec): number {
  if (spec.treated.length === 1) return unitIndices(panel, spec.treated, 'treated')[0]
  if (spec.treated.length === 0 && panel.units.length === 1) return 0
  throw new EngineError('invalid_spec', `design "its" models one unit: list exactly one unit in treated (got ${spec.treated.length}${spec.treated.length ? '' : `, and the panel has ${panel.units.length} units`}); for several units use "did"`)
}

export function estimateIts(panel: Panel, spec: Spec): EstimateResult {
  const warnings: string[] = []
  const its = spec.its ?? itsOptionsSchema.parse({})
  const unit = itsUnit(panel, spec)
  const roles = resolveRoles(panel, { ...spec, treated: [panel.units[unit]], comparison: [] }, { requireTreated: true, requireStart: false })
  const breakValues = its.breaks ?? (spec.start !== undefined && typeof spec.start !== 'object' ? [spec.start] : spec.window ? [spec.window.post[0]] : [])
  if (!breakValues.length) throw new EngineError('invalid_spec', 'design "its" needs a break: set its.breaks or spec.start')
  const breaks = breakValues.map((b, k) => periodOrdinal(panel, b, `its.breaks[${k}]`)).sort((a, b) => a - b)
  const columns = [...spec.covariates, ...(its.seasonColumn ? [its.seasonColumn] : [])]
  const sample = selectSample(panel, spec, roles, { columns }, warnings)
  const n = sample.n
  const first = sample.ordinal[0]
  const last = sample.ordinal[n - 1]
  if (breaks[0] <= first) throw new EngineError('no_pre_periods', `no pre-periods: the first break ${breakValues[0]} is not after the first period of the series (${panel.periods[panel.period[sample.rows[0]]].canonical})`)
  if (breaks[breaks.length - 1] > last) throw new EngineError('no_post_periods', `no post-periods: the break ${breakValues[breakValues.length - 1]} comes after the last period of the series`)
  const span = last - first + 1
  if (span !== n) warnings.push(`the series has ${span - n} missing period${span - n > 1 ? 's' : ''} between its ends: time counts them, but Newey-West treats neighbouring rows as adjacent`)

  const time = new Float64Array(n)
  for (let i = 0; i < n; i++) time[i] = sample.ordinal[i] - first + 1
  const terms: Term[] = [{ name: 'time', values: time }]
  const several = breaks.length > 1
  breaks.forEach((b, k) => {
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
  if (its.seasonality !== 'none') {
    const nSeasons = its.seasonality === 'month' ? 12 : 4
    const season = new Int32Array(n)
    const col = its.seasonColumn ? sample.column(its.seasonColumn) : null
    for (let i = 0; i < n; i++) {
      const s = col ? col[i] : seasonOf(panel.periods[panel.period[sample.rows[i]]], its.seasonality)
      if (!Number.isInteger(s) || s < 1 || s > nSeasons) {
        const where = `${panel.lineLabel} ${panel.line[sample.rows[i]]}`
        throw new EngineError('invalid_input', `${where}, column "${its.seasonColumn}": season ${s} is not a ${its.seasonality} number 1-${nSeasons}`)
      }
      season[i] = s
    }
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
  }
  for (const c of spec.covariates) terms.push({ name: c, values: sample.column(c) })

  let lag = its.hacLag
  if (lag === undefined) {
    lag = Math.floor(4 * (n / 100) ** (2 / 9))
    warnings.push(`its.hacLag not given: Newey-West lag ${lag} from the rule of thumb floor(4 (N/100)^(2/9))`)
  }
  const covariance = { kind: 'hac' as const, lag }
  const fit = fitLinearModel({ y: sample.y, terms, intercept: true, covariance })
  if (n < 24) warnings.push(`only ${n} periods: segmented regression with HAC errors needs a long series to be reliable`)
  const term = several ? 'level_1' : 'level'
  return makeResult(spec, sample, fit, covariance, { term, ...coefficientOf(fit, term) }, { durbinWatson: durbinWatson(fit.residuals), hacLag: lag }, warnings)
}
