/**
 * Donor weights beside the scores on the Pool step: the weighted comparison (synthetic
 * control; Abadie, Diamond and Hainmueller 2010, JASA 105:493-505) of the treated unit,
 * fitted on the pre-period outcome against every unflagged candidate,
 *
 *   w = argmin_w  sum_{t in pre} (y_treated,t - sum_j w_j y_j,t)^2,  w_j >= 0,  sum_j w_j = 1,
 *
 * by the engine's fitSimplexWeights (the same fit design "synthetic" makes for its main
 * unit, without the placebo refits, which the Pool step does not need). The outcome is the
 * one the engine analyses: logged when the study's transform is log, otherwise as stored
 * (a rate is already per 1,000).
 *
 * Periods used: the pre-periods where the treated unit has an outcome (as design
 * "synthetic" does). Donors lacking any of those (or with a non-positive value under log)
 * are left out of the fit and get no weight (null), as do flagged candidates.
 *
 * Returns no weights, with a note saying why, when: several treated units (the weighted
 * comparison takes one), fewer than two usable donors, no usable pre-period, or the fit
 * fails (an EngineError from the solver). Pure: no database, no framework.
 */
import { fitSimplexWeights } from '~~/server/engine/synthWeights'
import { isEngineError } from '~~/server/engine'
import type { StudyRow } from './fingerprint'

export interface PoolWeights {
  /** Weight per fitted donor (zeros included); donors absent from the map have none. */
  weights: Map<string, number>
  /** Root mean squared pre-period gap of the weighted comparison (outcome units), null without a fit. */
  rmspePre: number | null
  /** Pre-periods the fit used. */
  periods: number
  /** Why there are no weights, or which donors were left out; null when every donor was fitted. */
  note: string | null
}

export interface PoolWeightsInput {
  rows: readonly StudyRow[]
  treated: readonly string[]
  /** The candidates to fit against (the unflagged ones). */
  donors: readonly string[]
  prePeriods: readonly string[]
  transform: 'level' | 'log' | 'rate'
  /** Key of the outcome in each row's values. */
  outcome?: string
}

export function poolWeights(input: PoolWeightsInput): PoolWeights {
  const none = (note: string, periods = 0): PoolWeights => ({ weights: new Map(), rmspePre: null, periods, note })
  if (input.treated.length !== 1) return none(`The weighted comparison takes one treated unit; this study has ${input.treated.length}, so no weights are shown.`)
  const key = input.outcome ?? 'outcome'
  const log = input.transform === 'log'
  const pre = new Set(input.prePeriods)
  const wanted = new Set([input.treated[0]!, ...input.donors])
  const series = new Map<string, Map<string, number>>()
  for (const r of input.rows) {
    if (!pre.has(r.period) || !wanted.has(r.jurisdiction)) continue
    const v = r.values[key]
    if (v === null || v === undefined || !Number.isFinite(v)) continue
    const x = log ? (v > 0 ? Math.log(v) : Number.NaN) : v
    let m = series.get(r.jurisdiction)
    if (!m) series.set(r.jurisdiction, (m = new Map()))
    m.set(r.period, x)
  }
  const treatedSeries = series.get(input.treated[0]!)
  const periods = input.prePeriods.filter(p => treatedSeries?.has(p) && Number.isFinite(treatedSeries.get(p)!))
  if (!periods.length) return none(`${input.treated[0]} has no usable outcome in the pre-period${log ? ' (a log needs positive values)' : ''}, so no weights can be fitted.`)
  const usable: string[] = []
  const leftOut: string[] = []
  for (const d of input.donors) {
    const m = series.get(d)
    if (m && periods.every(p => Number.isFinite(m.get(p)))) usable.push(d)
    else leftOut.push(d)
  }
  if (usable.length < 2) return none(`Only ${usable.length} unflagged candidate${usable.length === 1 ? ' has' : 's have'} every pre-period outcome; the weighted comparison needs two.`, periods.length)
  const target = Float64Array.from(periods, p => treatedSeries!.get(p)!)
  const donors = usable.map(d => Float64Array.from(periods, p => series.get(d)!.get(p)!))
  try {
    const fit = fitSimplexWeights(target, donors)
    const weights = new Map(usable.map((d, j) => [d, fit.weights[j]!]))
    const note = leftOut.length
      ? `${leftOut.length} unflagged candidate${leftOut.length > 1 ? 's lack' : ' lacks'} a pre-period outcome and ${leftOut.length > 1 ? 'are' : 'is'} left out of the weights (${leftOut.slice(0, 5).join(', ')}${leftOut.length > 5 ? ', …' : ''}).`
      : null
    return { weights, rmspePre: fit.rmspe, periods: periods.length, note }
  }
  catch (e) {
    if (!isEngineError(e)) throw e
    return none(`The weights could not be fitted: ${e.message}.`, periods.length)
  }
}
