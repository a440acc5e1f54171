/**
 * Cluster-robust covariance (Liang and Zeger 1986; Arellano 1987 for fixed effects):
 *
 *   V_CR0 = (X'X)^-1 [ sum_g (X_g' u_g)(X_g' u_g)' ] (X'X)^-1
 *
 * and the CR1 family, which multiplies V_CR0 by a scalar (Cameron and Miller 2015, "A
 * Practitioner's Guide to Cluster-Robust Inference", section VI.B):
 *
 *   nested:   G/(G-1) * (N-1)/(N-K), K = slopes + intercept + period effects (unit effects
 *             nested in the unit clusters are not counted)
 *   full:     G/(G-1) * (N-1)/(N-K), K = every coefficient of the dummy-variable regression
 *   slopes:   G/(G-1) * (N-1)/(N-K), K = the reported slopes only
 *   clusters: G/(G-1)
 *   none:     1 (CR0)
 *
 * Tests use Student t with G-1 degrees of freedom. With fixed effects absorbed, X and u are
 * the within-transformed columns and residuals, which give the same slope block as the
 * dummy regression (Frisch-Waugh-Lovell).
 *
 * Throws EngineError 'single_cluster' when G < 2.
 */
import { Matrix } from 'ml-matrix'
import type { SmallSample } from '../../shared/engine/spec'
import { EngineError } from './errors'
import { symmetrize } from './ols'

/** The meat sum_g s_g s_g' with s_g = sum over cluster g of x_i u_i. */
export function clusterMeat(columns: Float64Array[], residuals: Float64Array, cluster: Int32Array, nClusters: number): Matrix {
  const k = columns.length
  const scores = new Float64Array(nClusters * k)
  for (let j = 0; j < k; j++) {
    const col = columns[j]
    for (let i = 0; i < residuals.length; i++) scores[cluster[i] * k + j] += col[i] * residuals[i]
  }
  const meat = new Matrix(k, k)
  for (let g = 0; g < nClusters; g++) {
    const o = g * k
    for (let a = 0; a < k; a++) {
      const sa = scores[o + a]
      if (sa === 0) continue
      for (let b = a; b < k; b++) meat.set(a, b, meat.get(a, b) + sa * scores[o + b])
    }
  }
  for (let a = 0; a < k; a++) for (let b = 0; b < a; b++) meat.set(a, b, meat.get(b, a))
  return meat
}

/** bread * meat * bread, symmetrised against rounding. */
export function sandwich(bread: Matrix, meat: Matrix): Matrix {
  return symmetrize(bread.mmul(meat).mmul(bread))
}

export interface SmallSampleCounts {
  nObs: number
  nClusters: number
  kFull: number
  kNested: number
  kSlopes: number
}

/** The K used in (N-1)/(N-K) for a variant, or null for 'clusters' and 'none'. */
export function smallSampleK(variant: SmallSample, c: SmallSampleCounts): number | null {
  switch (variant) {
    case 'nested':
      return c.kNested
    case 'full':
      return c.kFull
    case 'slopes':
      return c.kSlopes
    default:
      return null
  }
}

/** The scalar the CR0 matrix is multiplied by. */
export function clusterFactor(variant: SmallSample, c: SmallSampleCounts): number {
  if (c.nClusters < 2) {
    throw new EngineError('single_cluster', `cluster-robust errors need at least two clusters, but the data have ${c.nClusters}; use cluster "none" or add units`)
  }
  if (variant === 'none') return 1
  const g = c.nClusters / (c.nClusters - 1)
  const k = smallSampleK(variant, c)
  if (k === null) return g
  if (c.nObs <= k) throw new EngineError('too_few_observations', `too few observations for the "${variant}" correction: N = ${c.nObs} is not above K = ${k}`)
  return g * ((c.nObs - 1) / (c.nObs - k))
}
