/**
 * Chart series for the placebo distribution: a strip of placebo effects with the actual
 * effect marked (placebo units, one dot each, spread vertically so ties stay visible) and the
 * gap paths of every placebo unit against the treated unit's. Pure: data only.
 */
import type { InferenceResult } from '#shared/engine/result'

export interface StripPoint { x: number, y: number, label: string }

/** Placebo dots on rows 0..rows-1 (deterministic spread), and the actual effect. */
export function placeboStrip(inference: Pick<InferenceResult, 'placebos'>, actual: number, rows = 5): { placebos: StripPoint[], actual: StripPoint } {
  const list = [...(inference.placebos ?? [])].sort((a, b) => a.estimate - b.estimate)
  return {
    placebos: list.map((p, i) => ({ x: p.estimate, y: 1 + (i % rows), label: p.unit })),
    actual: { x: actual, y: (rows + 1) / 2, label: 'treated' },
  }
}

/** Share of placebos at least as large in absolute value as the actual effect. */
export function shareAsLarge(inference: Pick<InferenceResult, 'placebos'>, actual: number): number | null {
  const list = inference.placebos ?? []
  if (!list.length) return null
  return list.filter(p => Math.abs(p.estimate) >= Math.abs(actual) * (1 - 1e-9)).length / list.length
}
