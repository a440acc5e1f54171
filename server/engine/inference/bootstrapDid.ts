/**
 * The wild cluster bootstrap behind a difference-in-differences headline: rebuilds the
 * design's linear model (the same sample, treatment term or phases, covariates, absorbed
 * effects and clusters as designs/did.ts) and hands it to wildClusterBootstrap.ts. Webb's
 * six-point weights by default with 12 clusters or fewer (Webb 2014: Rademacher weights give
 * too few distinct draws there), Rademacher above.
 */
import type { EstimateResult, InferenceResult } from '../../../shared/engine/result'
import type { Spec } from '../../../shared/engine/spec'
import { EngineError } from '../errors'
import type { Panel } from '../panel'
import { phaseTerms, twoByTwoIndicators } from '../designs/did'
import type { Term } from '../regression'
import { clustersOf, resolveRoles, selectSample, treatmentIndicator } from '../sample'
import type { Choice } from './choose'
import { wildClusterBootstrap } from './wildClusterBootstrap'

export function didWildBootstrap(panel: Panel, spec: Spec, result: EstimateResult, choice: Choice): InferenceResult {
  if (spec.design !== 'did') throw new EngineError('invalid_spec', `the wild cluster bootstrap is available for difference-in-differences only (design "${spec.design}")`)
  const byColumn = spec.treatmentColumn !== undefined
  const roles = resolveRoles(panel, spec, { requireTreated: !byColumn, requireStart: !byColumn })
  const columns = [...(byColumn ? [spec.treatmentColumn!] : []), ...spec.covariates]
  const sample = selectSample(panel, spec, roles, { columns }, [])
  const terms: Term[] = []
  let test: string
  const twfe = spec.did.form !== '2x2'
  if (byColumn) {
    test = spec.treatmentColumn!
    terms.push({ name: test, values: sample.column(test) })
  } else if (!twfe) {
    // the pooled 2x2 regression: treated, post and their product, with an intercept
    const { treated, post } = twoByTwoIndicators(roles, sample)
    terms.push({ name: 'treated', values: treated }, { name: 'post', values: post }, { name: 'treatment', values: treatmentIndicator(sample, roles) })
    test = 'treatment'
  } else if (spec.did.phases?.length) {
    terms.push(...phaseTerms(panel, spec, roles, sample))
    test = 'phase_1'
  } else {
    test = 'treatment'
    terms.push({ name: test, values: treatmentIndicator(sample, roles) })
  }
  for (const c of spec.covariates) terms.push({ name: c, values: sample.column(c) })
  const { cluster, nClusters } = clustersOf(spec, sample)
  const weights = spec.inference.weights ?? (nClusters <= 12 ? 'webb' : 'rademacher')
  const level = spec.inference.level
  const boot = wildClusterBootstrap(
    {
      y: sample.y,
      terms,
      test,
      intercept: !twfe,
      absorb: twfe ? { unit: sample.unit, nUnits: sample.nUnits, ...(spec.fixedEffects === 'two-way' ? { period: sample.period, nPeriods: sample.nPeriods } : {}) } : undefined,
      cluster,
      nClusters,
      smallSample: spec.smallSample,
    },
    { draws: spec.inference.draws, weights, seed: spec.inference.seed, level, interval: true },
  )
  if (Math.abs(boot.estimate - result.effect.estimate) > 1e-8 * (1 + Math.abs(result.effect.estimate))) {
    throw new Error(`wild bootstrap model mismatch: ${boot.estimate} vs ${result.effect.estimate}`)
  }
  const pMin = 1 / boot.draws
  if (boot.ciLow === null || boot.ciHigh === null) result.warnings.push('the wild cluster bootstrap could not bound the interval: with these few clusters the data cannot rule out effects of any size')
  return {
    method: 'wild_bootstrap',
    reason: choice.reason,
    level,
    p: boot.p,
    ciLow: boot.ciLow,
    ciHigh: boot.ciHigh,
    draws: boot.draws,
    enumerated: boot.enumerated,
    weights: boot.weights,
    seed: boot.enumerated ? null : spec.inference.seed,
    pRatio: null,
    ratio: null,
    pMin,
    placebos: null,
    gaps: null,
  }
}
