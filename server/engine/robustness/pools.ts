/**
 * Alternative pools side by side: the run's design (or the design a pool names, such as the
 * weighted comparison) estimated on each named pool, with the headline inference the engine
 * chooses for it (inference/choose.ts). Estimates that agree across reasonable pools are more
 * credible than one that depends on the choice of comparison units (common practice; the
 * stress-test step of DESIGN.md, "The job").
 *
 * A pool that cannot be estimated (too few units, a design that refuses it) is kept with its
 * reason and no numbers. Throws EngineError 'invalid_spec' when no pool is given;
 * RobustnessCancelled when the caller cancels.
 */
import type { NamedPool, PoolEstimate, PoolsResult } from '../../../shared/engine/robustness'
import type { Spec } from '../../../shared/engine/spec'
import { EngineError, isEngineError } from '../errors'
import { estimate, parseSpec } from '../estimate'
import type { PanelInput } from '../panel'
import { type RobustnessHooks, refusal, step } from './hooks'

/** The run's spec moved onto a pool (and a design, when the pool names one). */
export function poolSpec(spec: Spec, pool: NamedPool): Spec {
  const design = pool.design ?? spec.design
  const moved: Spec = { ...spec, design, comparison: pool.units.filter((u) => !spec.treated.includes(u)) }
  if (design === 'synthetic' && spec.design !== 'synthetic') {
    // the weighted comparison reads levels without covariates in the regression, placebo inference only
    return { ...moved, covariates: [], inference: { ...spec.inference, method: 'permutation' }, did: { form: 'twfe' }, eventWindow: undefined, its: undefined }
  }
  return moved
}

export async function alternativePools(input: PanelInput, specInput: unknown, pools: readonly NamedPool[], hooks: RobustnessHooks = {}): Promise<PoolsResult> {
  const spec = parseSpec(specInput)
  if (!pools.length) throw new EngineError('invalid_spec', 'alternativePools: no pool to estimate on')
  const out: PoolEstimate[] = []
  for (let i = 0; i < pools.length; i++) {
    const pool = pools[i]
    await step(hooks, i / pools.length, `${pool.label}: ${pool.units.length} unit${pool.units.length === 1 ? '' : 's'} (${i + 1} of ${pools.length})`)
    const s = poolSpec(spec, pool)
    const base = { name: pool.name, label: pool.label, units: s.comparison ?? [], design: s.design, level: s.inference.level }
    if (!s.comparison?.length) {
      out.push({ ...base, estimate: null, ciLow: null, ciHigh: null, p: null, method: null, note: pool.note ?? 'No unit in this pool.' })
      continue
    }
    try {
      const r = estimate(input, s)
      out.push({ ...base, estimate: r.effect.estimate, ciLow: r.effect.ciLow, ciHigh: r.effect.ciHigh, p: r.effect.p, method: r.inference?.method ?? null, note: pool.note ?? null })
    } catch (e) {
      out.push({ ...base, estimate: null, ciLow: null, ciHigh: null, p: null, method: null, note: refusal(e, isEngineError) })
    }
  }
  await step(hooks, 1, 'Alternative pools done')
  const warnings: string[] = []
  const est = out.filter((p) => p.estimate !== null).map((p) => p.estimate!)
  if (est.length > 1 && est.some((e) => Math.sign(e) !== Math.sign(est[0]))) warnings.push('the pools disagree on the sign of the effect: the estimate depends on which jurisdictions it is compared with')
  return { kind: 'pools', pools: out, warnings }
}
