/**
 * Assembles the result JSON (shared/engine/result.ts) from a fitted model, so every design
 * reports counts, fit statistics and coefficients the same way. Throws nothing.
 */
import type { Effect, EstimateResult } from '../../shared/engine/result'
import type { Spec } from '../../shared/engine/spec'
import { type CovarianceRequest, type ModelFit, coefficientTable } from './regression'
import type { Sample } from './sample'

export type ResultExtras = Partial<
  Pick<EstimateResult, 'groupMeans' | 'eventStudy' | 'preTrend' | 'durbinWatson' | 'hacLag' | 'synthetic' | 'staggered' | 'decomposition' | 'errors' | 'comparison' | 'countFit'>
>

export function makeResult(spec: Spec, sample: Sample, fit: ModelFit, covariance: CovarianceRequest, effect: Effect, extras: ResultExtras, warnings: string[]): EstimateResult {
  if (!fit.converged) warnings.push('the fixed-effects transformation stopped before reaching its tolerance: estimates may be slightly inexact')
  return {
    design: spec.design,
    nObs: fit.nObs,
    nUnits: sample.nUnits,
    nPeriods: sample.nPeriods,
    nClusters: fit.nClusters,
    smallSample: covariance.kind === 'cluster' ? covariance.smallSample : null,
    vcov: covariance.kind,
    hacLag: extras.hacLag ?? null,
    effect,
    coefficients: coefficientTable(fit),
    groupMeans: extras.groupMeans ?? null,
    eventStudy: extras.eventStudy ?? null,
    preTrend: extras.preTrend ?? null,
    durbinWatson: extras.durbinWatson ?? null,
    fit: {
      ssr: fit.ssr,
      sigma: Math.sqrt(fit.ssr / fit.dfIid),
      rSquared: fit.rSquared,
      kFull: fit.kFull,
      kSmallSample: fit.kSmallSample,
    },
    inference: null,
    synthetic: extras.synthetic ?? null,
    staggered: extras.staggered ?? null,
    decomposition: extras.decomposition ?? null,
    errors: extras.errors ?? null,
    comparison: extras.comparison ?? null,
    countFit: extras.countFit ?? null,
    warnings,
  }
}

/** Number of units whose treatment value is non-zero in some row. */
export function countTreatedUnits(sample: Sample, treatment: Float64Array): number {
  const seen = new Uint8Array(sample.nUnits)
  let c = 0
  for (let i = 0; i < sample.n; i++) {
    if (treatment[i] !== 0 && !seen[sample.unit[i]]) {
      seen[sample.unit[i]] = 1
      c++
    }
  }
  return c
}
