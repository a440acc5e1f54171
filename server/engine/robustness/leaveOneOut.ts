/**
 * Leave one donor out: the run's design re-estimated once per comparison unit, with that unit
 * removed from the pool and everything else unchanged. The range of these estimates shows how
 * much the effect rests on any single comparison jurisdiction; the donors whose removal moves
 * it most are named (common practice in weighted-comparison studies, e.g. Abadie, Diamond and
 * Hainmueller 2015, AJPS 59: 495-510, section on robustness).
 *
 *   estimate_without(d) = estimate(rows, spec with comparison = pool \ {d})
 *   change(d)           = estimate_without(d) - full estimate
 *
 * By construction the estimate without a donor equals a fresh estimate on a pool without it
 * (tests/engine/robustness/leaveOneOut.test.ts checks this). Only point estimates are kept.
 *
 * Throws EngineError 'invalid_spec' when the design has no comparison pool (an interrupted
 * time series without comparison) or the pool has fewer than two units; RobustnessCancelled.
 */
import type { LeaveOneOutResult, LeaveOneOutRow } from '../../../shared/engine/robustness'
import type { Spec } from '../../../shared/engine/spec'
import { EngineError, isEngineError } from '../errors'
import { estimate, panelFor, parseSpec } from '../estimate'
import type { Panel, PanelInput } from '../panel'
import { type RobustnessHooks, refusal, step } from './hooks'
import { pointSpec } from './placeboTime'

/** The comparison units of a spec on a panel: spec.comparison, else every unit not treated. */
export function comparisonPool(panel: Panel, spec: Spec): string[] {
  if (spec.design === 'its' && (spec.its?.comparison ?? 'none') === 'none') {
    throw new EngineError('invalid_spec', 'leaveOneOut: this interrupted time series has no comparison units to leave out')
  }
  return spec.comparison ?? panel.units.filter((u) => !spec.treated.includes(u))
}

export async function leaveOneOut(input: PanelInput, specInput: unknown, options: { actual?: number } = {}, hooks: RobustnessHooks = {}): Promise<LeaveOneOutResult> {
  const spec = parseSpec(specInput)
  const panel = panelFor(input, spec)
  const pool = comparisonPool(panel, spec)
  if (pool.length < 2) throw new EngineError('invalid_spec', `leaveOneOut: the pool has ${pool.length} comparison unit${pool.length === 1 ? '' : 's'}; leaving one out needs at least two`)
  const point = pointSpec(spec)
  const full = options.actual ?? estimate(panel, { ...point, comparison: pool }).effect.estimate
  const rows: LeaveOneOutRow[] = []
  for (let i = 0; i < pool.length; i++) {
    const unit = pool[i]
    await step(hooks, i / pool.length, `Without ${unit} (${i + 1} of ${pool.length})`)
    try {
      const est = estimate(panel, { ...point, comparison: pool.filter((u) => u !== unit) }).effect.estimate
      rows.push({ unit, estimate: est, change: est - full, note: null })
    } catch (e) {
      rows.push({ unit, estimate: null, change: null, note: refusal(e, isEngineError) })
    }
  }
  await step(hooks, 1, 'Leave one out done')
  const values = rows.filter((r) => r.estimate !== null)
  // largest move first; moves equal up to rounding (1e-12 of the estimate) in code order
  const tie = 1e-12 * (1 + Math.abs(full))
  const byMove = (a: LeaveOneOutRow, b: LeaveOneOutRow) => {
    const d = Math.abs(b.change!) - Math.abs(a.change!)
    return Math.abs(d) > tie ? d : a.unit < b.unit ? -1 : 1
  }
  const mostInfluential = [...values].sort(byMove).slice(0, 3).map((r) => r.unit)
  const warnings: string[] = []
  const failed = rows.length - values.length
  if (failed) warnings.push(`${failed} donor${failed > 1 ? 's' : ''} could not be left out (the design could not be estimated without ${failed > 1 ? 'them' : 'it'})`)
  const est = values.map((r) => r.estimate!)
  return {
    kind: 'leave_one_out',
    full,
    rows,
    min: est.length ? Math.min(...est) : null,
    max: est.length ? Math.max(...est) : null,
    mostInfluential,
    warnings,
  }
}
