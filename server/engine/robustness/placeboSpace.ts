/**
 * Placebo in space: every comparison unit in turn plays the treated one (inference/
 * permutation.ts and inference/apply.ts). The placebos come from the run itself when its
 * headline inference was by placebo units; otherwise the same design is estimated here with
 * inference "permutation". The share, p-values and interval are permutationOutcome's.
 *
 *   share = #{|placebo| >= |actual|} / n,    p = (1 + #{|placebo| >= |actual|}) / (1 + n)
 *
 * Throws EngineError when the design cannot be estimated or no placebo can be;
 * RobustnessCancelled when the caller cancels before the estimate.
 */
import type { PlaceboSpaceResult } from '../../../shared/engine/robustness'
import type { EstimateResult, InferenceResult } from '../../../shared/engine/result'
import { EngineError } from '../errors'
import { estimate, parseSpec } from '../estimate'
import { permutationOutcome } from '../inference/permutation'
import type { PanelInput } from '../panel'
import { type RobustnessHooks, step } from './hooks'

export async function placeboInSpace(input: PanelInput, specInput: unknown, options: { result?: EstimateResult | null } = {}, hooks: RobustnessHooks = {}): Promise<PlaceboSpaceResult> {
  const spec = parseSpec(specInput)
  let source: PlaceboSpaceResult['source'] = 'run'
  let result = options.result ?? null
  const warnings: string[] = []
  if (!result?.inference?.placebos?.length) {
    source = 'estimated'
    await step(hooks, 0, 'Each comparison unit in turn plays the treated one')
    result = estimate(input, { ...spec, inference: { ...spec.inference, method: 'permutation' } })
    warnings.push(...result.warnings.filter((w) => /placebo/.test(w)))
  }
  const inf = result.inference
  if (!inf?.placebos?.length) throw new EngineError('invalid_spec', 'placeboInSpace: no placebo unit could be estimated for this design and pool')
  await step(hooks, 1, 'Placebo in space done')
  const actual = result.effect.estimate
  const out = permutationOutcome({ estimate: actual, ratio: inf.ratio }, inf.placebos, spec.inference.level)
  const n = inf.placebos.length
  const atLeast = inf.placebos.filter((pl) => Math.abs(pl.estimate) >= Math.abs(actual) * (1 - 1e-9)).length
  const inference: InferenceResult = inf.method === 'permutation' ? inf : { ...inf, method: 'permutation', p: out.p, ciLow: out.ciLow, ciHigh: out.ciHigh, pMin: out.pMin, pRatio: out.pRatio }
  if (out.ciLow === null) warnings.push(`with ${n} placebo${n > 1 ? 's' : ''} no ${Math.round(spec.inference.level * 100)}% interval can be bounded (the smallest possible p is 1/${n + 1})`)
  return {
    kind: 'placebo_space',
    actual,
    source,
    placebos: inf.placebos,
    n,
    atLeastAsLarge: atLeast,
    share: atLeast / n,
    p: out.p,
    pRatio: out.pRatio,
    pMin: out.pMin,
    level: spec.inference.level,
    ciLow: out.ciLow,
    ciHigh: out.ciHigh,
    inference,
    warnings,
  }
}
