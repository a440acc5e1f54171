/**
 * Differential pre-trend (slope difference) test: on pre-period rows only (periods before
 * the earliest start), regress the outcome on treated x period with unit and period fixed
 * effects, clustered like the main model:
 *
 *   y_it = a_i + g_t + delta * (D_i * (t - t0)) + e_it
 *
 * delta is the difference between the treated and comparison linear pre-trends (in a
 * balanced panel, the OLS slope of the per-period mean gap). Centring the period at t0 does
 * not change delta. A joint Wald test of event-study leads lives in wald.ts.
 *
 * Returns null (with a warning) when fewer than three pre-periods exist, since with two
 * the interaction is a single difference and with one it is absorbed. Throws what
 * fitLinearModel throws.
 */
import type { SlopeDiff } from '../../shared/engine/result'
import type { Spec } from '../../shared/engine/spec'
import type { Panel } from './panel'
import { coefficientOf, fitLinearModel } from './regression'
import { type Roles, covarianceFor, selectSample } from './sample'

export function preTrendSlopeDiff(panel: Panel, spec: Spec, roles: Roles, columns: string[], warnings: string[]): SlopeDiff | null {
  const starts = roles.treated.map((u) => roles.start[u]).filter((s) => !Number.isNaN(s))
  if (!starts.length) return null
  const first = Math.min(...starts)
  const sample = selectSample(panel, spec, roles, { columns, keep: (r) => panel.periods[panel.period[r]].ordinal < first }, [])
  if (sample.nPeriods < 3) {
    warnings.push(`pre-trend slope test skipped: it needs at least 3 pre-periods, the data have ${sample.nPeriods}`)
    return null
  }
  const x = new Float64Array(sample.n)
  let anyTreated = false
  for (let i = 0; i < sample.n; i++) {
    const u = sample.unitPanel[sample.unit[i]]
    if (roles.isTreated[u]) {
      x[i] = sample.ordinal[i] - first
      anyTreated = true
    }
  }
  if (!anyTreated || sample.nUnits < 2) return null
  const covariance = covarianceFor(spec, sample)
  const fit = fitLinearModel({
    y: sample.y,
    terms: [{ name: 'treated_x_period', values: x }],
    intercept: false,
    absorb: { unit: sample.unit, nUnits: sample.nUnits, period: sample.period, nPeriods: sample.nPeriods },
    covariance,
  })
  const c = coefficientOf(fit, 'treated_x_period')
  return { estimate: c.estimate, se: c.se, df: c.df, p: c.p, nObs: fit.nObs }
}
