/**
 * The reader's scale for a count model's series: counts as recorded, or rates per 1,000 or per
 * 100,000 of the exposure (count / exposure x scale). Display only: the model and its rate
 * ratios do not change. Series without an exposure stay as counts.
 */
import type { EstimateResult } from '#shared/engine/result'

type ItsPoint = NonNullable<EstimateResult['itsSeries']>[number]

export const ITS_SCALES = [
  { per: 0, label: 'Counts' },
  { per: 1000, label: 'Per 1,000' },
  { per: 100000, label: 'Per 100,000' },
] as const

export const hasExposure = (series: ItsPoint[] | null | undefined) => !!series?.length && series.every(p => typeof p.exposure === 'number' && p.exposure > 0)

export function scaleItsSeries(series: ItsPoint[], per: number): ItsPoint[] {
  if (!per || !hasExposure(series)) return series
  const f = (v: number | null | undefined, e: number) => (typeof v === 'number' ? (v / e) * per : v)
  return series.map((p) => {
    const e = p.exposure!
    return { ...p, observed: f(p.observed, e)!, fitted: f(p.fitted, e)!, counterfactual: f(p.counterfactual, e)!, counterfactualLow: f(p.counterfactualLow, e), counterfactualHigh: f(p.counterfactualHigh, e) }
  })
}

export const scaleTitle = (per: number) => (per ? `per ${per.toLocaleString('en')}` : 'count')
