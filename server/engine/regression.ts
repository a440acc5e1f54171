/**
 * One linear model from terms to inference: optional absorbed fixed effects (within
 * transformation), OLS, the covariance the caller asks for (cluster-robust CR1 family, Newey-
 * West HAC, HC1 or classical iid) and the coefficient table. Every design calls this, so a
 * coefficient means the same thing everywhere.
 *
 * Counts behind the small-sample corrections (see clusteredCovariance.ts), with p terms:
 *   no fixed effects: K_full = K_nested = K_slopes = p (the intercept is one of the terms)
 *   unit effects:     K_full = p + U,          K_nested = p + 1,          K_slopes = p
 *   two-way effects:  K_full = p + U + T - C,  K_nested = p + T - C + 1,  K_slopes = p
 * (C = connected components of the unit-period graph, 1 in any ordinary panel). Unit effects
 * are "nested" because clusters are units. Classical (iid) errors use s^2 = SSR/(N - K_full).
 *
 * Throws EngineError 'singular_design' when a term is absorbed by the fixed effects or is
 * collinear with other terms (naming them), 'single_cluster' for G < 2, and
 * 'too_few_observations' when N <= K_full.
 */
import { Matrix } from 'ml-matrix'
import type { Coefficient } from '../../shared/engine/result'
import type { SmallSample } from '../../shared/engine/spec'
import { clusterFactor, clusterMeat, sandwich, smallSampleK } from './clusteredCovariance'
import { pTwoSidedT, tQuantileAt } from './distributions'
import { EngineError, listSome } from './errors'
import { neweyWestMeat } from './neweyWest'
import { dot, ols } from './ols'
import { type AbsorbSpec, makeAbsorber } from './withinTransform'

export type CovarianceRequest =
  | { kind: 'cluster'; cluster: Int32Array; nClusters: number; smallSample: SmallSample }
  | { kind: 'hac'; lag: number }
  | { kind: 'hc1' }
  | { kind: 'iid' }

export interface Term {
  name: string
  values: Float64Array
}

export interface LinearModel {
  y: Float64Array
  terms: Term[]
  /** Add an intercept named "intercept" (ignored when fixed effects are absorbed). */
  intercept: boolean
  absorb?: AbsorbSpec
  covariance: CovarianceRequest
}

export interface ModelFit {
  names: string[]
  beta: Float64Array
  /** The requested covariance. */
  vcov: Matrix
  vcovIid: Matrix
  /** Degrees of freedom for t and F tests under the requested covariance. */
  df: number
  dfIid: number
  nObs: number
  nClusters: number | null
  kFull: number
  /** K in (N-1)/(N-K) of the cluster correction used, or null. */
  kSmallSample: number | null
  ssr: number
  rSquared: number
  residuals: Float64Array
  /** False when alternating projections stopped before the tolerance. */
  converged: boolean
}

export function fitLinearModel(model: LinearModel): ModelFit {
  const n = model.y.length
  const names = model.terms.map((t) => t.name)
  let columns = model.terms.map((t) => t.values)
  let y = model.y
  let kFull: number
  let kNested: number
  let converged = true
  const p = names.length + (model.absorb ? 0 : model.intercept ? 1 : 0)

  if (model.absorb) {
    const absorber = makeAbsorber(model.absorb)
    const raw = columns
    columns = raw.map((c) => absorber.demean(c))
    for (let j = 0; j < columns.length; j++) {
      const before = Math.sqrt(dot(raw[j], raw[j]))
      const after = Math.sqrt(dot(columns[j], columns[j]))
      if (!(after > 1e-9 * before)) {
        const what = model.absorb.period ? 'the unit and period fixed effects' : 'the unit fixed effects'
        throw new EngineError('singular_design', `singular design: term "${names[j]}" is absorbed by ${what} (it does not vary within units${model.absorb.period ? ' after removing period effects' : ''})`)
      }
    }
    y = absorber.demean(y)
    converged = absorber.converged()
    kFull = p + absorber.dummyRank
    kNested = model.absorb.period ? p + absorber.dummyRank - model.absorb.nUnits + 1 : p + 1
  } else {
    if (model.intercept) {
      columns = [new Float64Array(n).fill(1), ...columns]
      names.unshift('intercept')
    }
    kFull = p
    kNested = p
  }
  if (n <= kFull) {
    throw new EngineError('too_few_observations', `too few observations: ${n} rows for ${kFull} coefficients including fixed effects`)
  }

  const fit = ols(y, columns, names)
  const dfIid = n - kFull
  const s2 = fit.ssr / dfIid
  const vcovIid = fit.bread.clone().mul(s2)

  let ybar = 0
  for (let i = 0; i < n; i++) ybar += model.y[i]
  ybar /= n
  let tss = 0
  for (let i = 0; i < n; i++) tss += (model.y[i] - ybar) ** 2

  let vcov: Matrix
  let df = dfIid
  let nClusters: number | null = null
  let kSmallSample: number | null = null
  const cov = model.covariance
  if (cov.kind === 'cluster') {
    const counts = { nObs: n, nClusters: cov.nClusters, kFull, kNested, kSlopes: names.length }
    const factor = clusterFactor(cov.smallSample, counts)
    vcov = sandwich(fit.bread, clusterMeat(columns, fit.residuals, cov.cluster, cov.nClusters)).mul(factor)
    df = cov.nClusters - 1
    nClusters = cov.nClusters
    kSmallSample = smallSampleK(cov.smallSample, counts)
  } else if (cov.kind === 'hac') {
    vcov = sandwich(fit.bread, neweyWestMeat(columns, fit.residuals, cov.lag))
  } else if (cov.kind === 'hc1') {
    vcov = sandwich(fit.bread, neweyWestMeat(columns, fit.residuals, 0)).mul(n / dfIid)
  } else {
    vcov = vcovIid
  }
  return {
    names,
    beta: fit.beta,
    vcov,
    vcovIid,
    df,
    dfIid,
    nObs: n,
    nClusters,
    kFull,
    kSmallSample,
    ssr: fit.ssr,
    rSquared: tss > 0 ? 1 - fit.ssr / tss : NaN,
    residuals: fit.residuals,
    converged,
  }
}

/** estimate, se, t, p and 95% bounds from an estimate, its SE and df. */
export function inference(estimate: number, se: number, seIid: number, df: number): Coefficient {
  const t = estimate / se
  const q = tQuantileAt(0.975, df)
  return { estimate, se, seIid, df, t, p: pTwoSidedT(t, df), ciLow: estimate - q * se, ciHigh: estimate + q * se }
}

export function coefficientOf(fit: ModelFit, name: string): Coefficient {
  const j = fit.names.indexOf(name)
  if (j < 0) throw new EngineError('invalid_input', `coefficient "${name}" is not in the model (terms: ${listSome(fit.names, 10)})`)
  return inference(fit.beta[j], Math.sqrt(fit.vcov.get(j, j)), Math.sqrt(fit.vcovIid.get(j, j)), fit.df)
}

export function coefficientTable(fit: ModelFit): Record<string, Coefficient> {
  const out: Record<string, Coefficient> = {}
  for (const name of fit.names) out[name] = coefficientOf(fit, name)
  return out
}

/** sum_j w_j beta_j with its SE under both covariances. */
export function linearCombination(fit: ModelFit, weights: Record<string, number>): Coefficient {
  const idx = Object.keys(weights).map((name) => {
    const j = fit.names.indexOf(name)
    if (j < 0) throw new EngineError('invalid_input', `coefficient "${name}" is not in the model`)
    return j
  })
  const w = Object.values(weights)
  let est = 0
  let v = 0
  let vIid = 0
  for (let a = 0; a < idx.length; a++) {
    est += w[a] * fit.beta[idx[a]]
    for (let b = 0; b < idx.length; b++) {
      v += w[a] * w[b] * fit.vcov.get(idx[a], idx[b])
      vIid += w[a] * w[b] * fit.vcovIid.get(idx[a], idx[b])
    }
  }
  return inference(est, Math.sqrt(v), Math.sqrt(vIid), fit.df)
}
