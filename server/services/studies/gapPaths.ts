/**
 * The placebo units' gap paths of a run, stored apart from its result (study_runs.gap_paths):
 * with 50 placebo units over 200 periods they are about 70 kB of a 75 kB result as JSON, written,
 * sent and parsed on every run although only the gap-paths chart reads them. Apart, they are
 * one array of doubles (units x periods, NaN for a period without a value), written as bytes
 * and read only when the chart asks. Pure.
 */
import type { EstimateResult, InferenceResult } from '#shared/engine/result'

type Gaps = NonNullable<InferenceResult['gaps']>

/** The result without its placebo paths (placeboUnits names them), and the paths as bytes; null bytes when there are none. */
export function splitGapPaths(result: EstimateResult): { result: EstimateResult, paths: Buffer | null } {
  const gaps = result.inference?.gaps
  if (!gaps || !gaps.placebos.length) return { result, paths: null }
  const periods = gaps.periods.length
  const values = new Float64Array(gaps.placebos.length * periods)
  gaps.placebos.forEach((p, u) => {
    if (p.gap.length !== periods) throw new Error(`splitGapPaths: the path of ${p.unit} has ${p.gap.length} periods, not ${periods}.`)
    for (let t = 0; t < periods; t++) values[u * periods + t] = p.gap[t] ?? Number.NaN
  })
  const slim: Gaps = { periods: gaps.periods, treated: gaps.treated, placebos: [], placeboUnits: gaps.placebos.map(p => p.unit) }
  return {
    result: { ...result, inference: { ...result.inference!, gaps: slim } },
    paths: Buffer.from(values.buffer, values.byteOffset, values.byteLength),
  }
}

/** The gap paths whole again: the stored result's gaps and the bytes splitGapPaths made. */
export function joinGapPaths(gaps: Gaps, paths: Buffer | null): Omit<Gaps, 'placeboUnits'> {
  const units = gaps.placeboUnits ?? []
  const periods = gaps.periods.length
  if (!units.length) return { periods: gaps.periods, treated: gaps.treated, placebos: gaps.placebos }
  if (!paths || paths.byteLength !== units.length * periods * 8) throw new Error('The stored gap paths do not match the run\'s placebo units and periods.')
  // copied out: a Buffer from the driver need not sit on an 8-byte boundary
  const values = new Float64Array(new Uint8Array(paths).buffer)
  return {
    periods: gaps.periods,
    treated: gaps.treated,
    placebos: units.map((unit, u) => ({ unit, gap: Array.from(values.subarray(u * periods, (u + 1) * periods), v => (Number.isNaN(v) ? null : v)) })),
  }
}
