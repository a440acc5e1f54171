/**
 * Event study with a reference period: two-way fixed effects with one dummy per relative
 * time e = period - start of the unit (treated units only), e in from..to except the
 * reference (default -1):
 *
 *   y_it = a_i + g_t + sum_{e != ref} b_e 1[rel_it = e] + x_it' c + e_it
 *
 * bin (default true): the end dummies also collect every earlier (rel <= from) or later
 * (rel >= to) time; without bin, treated rows outside from..to are dropped (warned).
 * Comparison units have every dummy 0. Clustered by unit (CR1, smallSample as specified).
 * Pre-trends: joint Wald test of the leads (e < 0, e != ref) in chi-square and F form
 * (wald.ts; F df2 = G-1 when clustered), and the slope difference (preTrend.ts).
 * The effect is the mean of the lag coefficients (e >= 0), with its SE from the covariance.
 *
 * Throws EngineError 'invalid_spec' (no treated units or start), 'no_pre_periods',
 * 'no_post_periods', and what the regression throws.
 */
import type { EstimateResult, EventStudyPoint } from '../../../shared/engine/result'
import type { Spec } from '../../../shared/engine/spec'
import { EngineError } from '../errors'
import type { Panel } from '../panel'
import { preTrendSlopeDiff } from '../preTrend'
import { type Term, coefficientOf, fitLinearModel, linearCombination } from '../regression'
import { makeResult } from '../report'
import { clusterWarnings, covarianceFor, requirePrePost, resolveRoles, selectSample } from '../sample'
import { waldTest } from '../wald'

export const relName = (e: number): string => `rel_${e}`

export function estimateEventStudy(panel: Panel, spec: Spec): EstimateResult {
  const warnings: string[] = []
  const roles = resolveRoles(panel, spec, { requireTreated: true, requireStart: true })
  const relOf = (r: number): number => {
    const u = panel.unit[r]
    return roles.isTreated[u] ? panel.periods[panel.period[r]].ordinal - roles.start[u] : NaN
  }
  // the observed range of relative times fixes the default window
  let minRel = Infinity
  let maxRel = -Infinity
  for (let r = 0; r < panel.nRows; r++) {
    const e = relOf(r)
    if (!Number.isNaN(e)) {
      minRel = Math.min(minRel, e)
      maxRel = Math.max(maxRel, e)
    }
  }
  const win = spec.eventWindow ?? { from: Math.min(minRel, -1), to: Math.max(maxRel, 0), reference: -1, bin: true }
  let outside = 0
  const sample = selectSample(
    panel,
    spec,
    roles,
    {
      columns: spec.covariates,
      keep: (r) => {
        const e = relOf(r)
        if (win.bin || Number.isNaN(e) || (e >= win.from && e <= win.to)) return true
        outside++
        return false
      },
    },
    warnings,
  )
  if (outside) warnings.push(`dropped ${outside} treated row${outside > 1 ? 's' : ''} outside the event window ${win.from}..${win.to} (bin is off)`)
  requirePrePost(sample, roles, spec)

  const times: number[] = []
  for (let e = win.from; e <= win.to; e++) if (e !== win.reference) times.push(e)
  const dummies = new Map(times.map((e) => [e, new Float64Array(sample.n)]))
  const used = new Set<number>()
  let refRows = 0
  for (let i = 0; i < sample.n; i++) {
    const u = sample.unitPanel[sample.unit[i]]
    if (!roles.isTreated[u]) continue
    let e = sample.ordinal[i] - roles.start[u]
    if (e < win.from) e = win.from
    if (e > win.to) e = win.to
    if (e === win.reference) {
      refRows++
      continue
    }
    dummies.get(e)![i] = 1
    used.add(e)
  }
  if (!refRows) throw new EngineError('no_pre_periods', `event study: no treated rows at the reference period (relative time ${win.reference})`)
  const empty = times.filter((e) => !used.has(e))
  if (empty.length) warnings.push(`no treated rows at relative time${empty.length > 1 ? 's' : ''} ${empty.join(', ')}: left out`)
  const kept = times.filter((e) => used.has(e))
  const terms: Term[] = [...kept.map((e) => ({ name: relName(e), values: dummies.get(e)! })), ...spec.covariates.map((c) => ({ name: c, values: sample.column(c) }))]

  const covariance = covarianceFor(spec, sample)
  const fit = fitLinearModel({
    y: sample.y,
    terms,
    intercept: false,
    absorb: { unit: sample.unit, nUnits: sample.nUnits, ...(spec.fixedEffects === 'two-way' ? { period: sample.period, nPeriods: sample.nPeriods } : {}) },
    covariance,
  })
  warnings.push(...clusterWarnings(spec, sample.nUnits, roles.treated.length))

  const eventStudy: EventStudyPoint[] = []
  for (let e = win.from; e <= win.to; e++) {
    const bin = win.bin && e === win.from && e !== win.reference ? '<=' : win.bin && e === win.to && e !== win.reference ? '>=' : null
    if (e === win.reference) eventStudy.push({ relTime: e, estimate: 0, se: 0, ciLow: 0, ciHigh: 0, reference: true, bin: null })
    else if (used.has(e)) {
      const c = coefficientOf(fit, relName(e))
      eventStudy.push({ relTime: e, estimate: c.estimate, se: c.se, ciLow: c.ciLow, ciHigh: c.ciHigh, reference: false, bin })
    }
  }
  const leads = kept.filter((e) => e < 0).map(relName)
  const lags = kept.filter((e) => e >= 0).map(relName)
  if (!lags.length) throw new EngineError('no_post_periods', 'event study: no lag (relative time >= 0) in the window')
  let wald = null
  if (leads.length) {
    if (fit.nClusters !== null && leads.length > fit.nClusters - 1) {
      warnings.push(`lead Wald test skipped: ${leads.length} leads need more than ${leads.length} clusters`)
    } else wald = waldTest(fit.names, fit.beta, fit.vcov, leads, fit.df)
  }
  const slopeDiff = roles.commonStart !== null ? preTrendSlopeDiff(panel, spec, roles, spec.covariates, warnings) : null
  const effect = { term: 'mean_post', ...linearCombination(fit, Object.fromEntries(lags.map((l) => [l, 1 / lags.length]))) }
  return makeResult(spec, sample, fit, covariance, effect, { eventStudy, preTrend: { wald, slopeDiff } }, warnings)
}
