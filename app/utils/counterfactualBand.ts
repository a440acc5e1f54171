/**
 * The shaded band around an interrupted time series' counterfactual (the pre-policy trend
 * projected past the start): two datasets for chart.js, the lower edge hidden from the legend
 * and the upper edge filled down to it. Runs stored before the band existed have no bounds and
 * get no band.
 */
import type { EstimateResult } from '#shared/engine/result'

type ItsPoint = NonNullable<EstimateResult['itsSeries']>[number]

export const BAND_FILL = 'rgba(45, 107, 95, 0.14)'

/** The coverage the run asked for (spec.inference.level), 0.95 by default. */
export function bandLevel(spec: Record<string, unknown>): number {
  const level = (spec.inference as { level?: unknown } | undefined)?.level
  return typeof level === 'number' && level > 0.5 && level < 1 ? level : 0.95
}

export function bandLegend(level: number): string {
  return `Without the policy: projected pre-policy trend, ${Math.round(level * 1000) / 10}% band`
}

export function counterfactualBand(series: ItsPoint[], level: number) {
  if (!series.some(p => typeof p.counterfactualLow === 'number' && typeof p.counterfactualHigh === 'number')) return []
  const edge = { borderWidth: 0, pointRadius: 0, borderColor: 'transparent', backgroundColor: BAND_FILL }
  return [
    { ...edge, label: '_band_low', data: series.map(p => p.counterfactualLow ?? null), fill: false },
    { ...edge, label: bandLegend(level), data: series.map(p => p.counterfactualHigh ?? null), fill: '-1' as const },
  ]
}
