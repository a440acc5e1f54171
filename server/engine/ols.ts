/**
 * Ordinary least squares on columns held as Float64Arrays.
 *
 * beta = (X'X)^-1 X'y, solved by the Cholesky factorisation (ml-matrix) of the column-scaled
 * cross-product D^-1 X'X D^-1 (D = diag of column norms), which keeps the conditioning of
 * designs with a time trend or mixed scales close to that of a QR solve. The same
 * factorisation detects rank deficiency: its j-th squared pivot is 1 - R^2 of column j on the
 * columns before it, so a pivot below 1e-10 marks column j as a linear combination of earlier
 * ones, and the terms involved are named (Golub and Van Loan, Matrix Computations, 4.2).
 *
 * Throws EngineError 'singular_design' naming the collinear terms, and
 * 'too_few_observations' when N <= K.
 */
import { CholeskyDecomposition, Matrix } from 'ml-matrix'
import { EngineError, listSome } from './errors'

/** Squared Cholesky pivot (scaled) below which a column counts as collinear. */
const COLLINEAR_TOL = 1e-10

export interface OlsFit {
  n: number
  k: number
  beta: Float64Array
  residuals: Float64Array
  ssr: number
  /** (X'X)^-1, the bread of every sandwich covariance. */
  bread: Matrix
}

/** Inner product of two equal-length arrays. */
export function dot(a: Float64Array, b: Float64Array): number {
  let s = 0
  for (let i = 0; i < a.length; i++) s += a[i] * b[i]
  return s
}

/** Replaces m by (m + m')/2 in place, removing rounding asymmetry; returns m. */
export function symmetrize(m: Matrix): Matrix {
  for (let a = 0; a < m.rows; a++) {
    for (let b = 0; b < a; b++) {
      const v = (m.get(a, b) + m.get(b, a)) / 2
      m.set(a, b, v)
      m.set(b, a, v)
    }
  }
  return m
}

function collinearityMessage(names: string[], scaled: Matrix, j: number): string {
  if (j === 0) return `singular design: term "${names[0]}" is zero in every row used`
  const lead = scaled.subMatrix(0, j - 1, 0, j - 1)
  const rhs = scaled.subMatrix(0, j - 1, j, j)
  const coef = new CholeskyDecomposition(lead).solve(rhs)
  const involved: string[] = []
  for (let i = 0; i < j; i++) if (Math.abs(coef.get(i, 0)) > 1e-6) involved.push(names[i])
  const others = involved.length ? listSome(involved, 8) : 'the fixed effects'
  return `singular design: term "${names[j]}" is a linear combination of ${others} (collinear terms: ${listSome([...involved, names[j]], 9)}); drop one of them`
}

/**
 * Fits y on the given columns (no intercept is added: pass a column of ones if wanted).
 * `names` label the columns in error messages.
 */
export function ols(y: Float64Array, columns: Float64Array[], names: string[]): OlsFit {
  const n = y.length
  const k = columns.length
  if (n <= k) {
    throw new EngineError('too_few_observations', `too few observations: ${n} rows for ${k} terms (${listSome(names, 8)}); need more rows than terms`)
  }
  const norms = new Float64Array(k)
  for (let j = 0; j < k; j++) {
    norms[j] = Math.sqrt(dot(columns[j], columns[j]))
    if (!(norms[j] > 0)) throw new EngineError('singular_design', `singular design: term "${names[j]}" is zero in every row used`)
  }
  const scaled = new Matrix(k, k)
  const xty = new Matrix(k, 1)
  for (let a = 0; a < k; a++) {
    for (let b = a; b < k; b++) {
      const v = dot(columns[a], columns[b]) / (norms[a] * norms[b])
      scaled.set(a, b, v)
      scaled.set(b, a, v)
    }
    xty.set(a, 0, dot(columns[a], y) / norms[a])
  }
  const chol = new CholeskyDecomposition(scaled)
  const L = chol.lowerTriangularMatrix
  for (let j = 0; j < k; j++) {
    const pivot = L.get(j, j)
    if (!(pivot * pivot > COLLINEAR_TOL)) throw new EngineError('singular_design', collinearityMessage(names, scaled, j))
  }
  const scaledBeta = chol.solve(xty)
  const scaledInverse = chol.solve(Matrix.eye(k))
  const beta = new Float64Array(k)
  for (let j = 0; j < k; j++) beta[j] = scaledBeta.get(j, 0) / norms[j]
  const bread = new Matrix(k, k)
  for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) bread.set(a, b, scaledInverse.get(a, b) / (norms[a] * norms[b]))
  symmetrize(bread)

  const residuals = Float64Array.from(y)
  for (let j = 0; j < k; j++) {
    const col = columns[j]
    const bj = beta[j]
    for (let i = 0; i < n; i++) residuals[i] -= bj * col[i]
  }
  return { n, k, beta, residuals, ssr: dot(residuals, residuals), bread }
}
