/**
 * Wald test that q coefficients are jointly zero (e.g. the event-study leads):
 *
 *   W = b_R' V_R^-1 b_R  ~ chi-square(q);   F = W / q  ~ F(q, df2)
 *
 * V_R is the block of the model's covariance (clustered, HAC or iid) for the tested terms;
 * df2 = G-1 for cluster-robust covariance (Cameron and Miller 2015, section VII), N-K
 * otherwise, where the iid form equals the classical nested-model F test. Solved by Cholesky
 * (ml-matrix).
 *
 * Throws EngineError 'invalid_input' when no terms are given or the block is not positive
 * definite (e.g. more restrictions than clusters - 1).
 */
import { CholeskyDecomposition, Matrix } from 'ml-matrix'
import type { WaldResult } from '../../shared/engine/result'
import { pUpperChi2, pUpperF } from './distributions'
import { EngineError } from './errors'

export function waldTest(names: string[], beta: Float64Array, vcov: Matrix, terms: string[], df2: number): WaldResult {
  if (terms.length === 0) throw new EngineError('invalid_input', 'waldTest: no terms to test')
  const idx = terms.map((t) => {
    const i = names.indexOf(t)
    if (i < 0) throw new EngineError('invalid_input', `waldTest: term "${t}" is not in the model`)
    return i
  })
  const q = idx.length
  const b = new Matrix(q, 1)
  const V = new Matrix(q, q)
  for (let a = 0; a < q; a++) {
    b.set(a, 0, beta[idx[a]])
    for (let c = 0; c < q; c++) V.set(a, c, vcov.get(idx[a], idx[c]))
  }
  const chol = new CholeskyDecomposition(V)
  if (!chol.isPositiveDefinite()) {
    throw new EngineError('invalid_input', `waldTest: the covariance of ${q} tested terms is not positive definite (with clustered errors the test needs at most G-1 = ${df2} restrictions)`)
  }
  const x = chol.solve(b)
  let chi2 = 0
  for (let a = 0; a < q; a++) chi2 += b.get(a, 0) * x.get(a, 0)
  const F = chi2 / q
  return { terms, chi2, pChi2: pUpperChi2(chi2, q), F, df1: q, df2, p: pUpperF(F, q, df2) }
}
