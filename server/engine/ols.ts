/**
 * Ordinary least squares on columns held as Float64Arrays.
 *
 * beta = (X'X)^-1 X'y (X'X and X'y from one blocked pass over the rows), solved by the Cholesky factorisation (ml-matrix) of the column-scaled
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

/** Rows per block of the cross-product pass: k columns of a block stay in the CPU cache. */
const BLOCK_ROWS = 1024

/**
 * X'X and X'y in one blocked pass over the rows: for each block of BLOCK_ROWS rows every
 * pair of columns (and each column with y) is multiplied while the block is in cache, instead
 * of streaming two whole columns from memory for each of the k(k+1)/2 pairs. Returns the
 * upper triangle and diagonal of X'X in `xtx` (row-major k x k, lower triangle mirrored) and
 * X'y in `xty`. Sums are accumulated block by block, so they equal the column dot products
 * up to rounding in the last bits.
 */
export function crossProducts(columns: Float64Array[], y: Float64Array): { xtx: Float64Array; xty: Float64Array } {
  const k = columns.length
  const n = y.length
  const xtx = new Float64Array(k * k)
  const xty = new Float64Array(k)
  for (let start = 0; start < n; start += BLOCK_ROWS) {
    const end = Math.min(n, start + BLOCK_ROWS)
    for (let a = 0; a < k; a++) {
      const ca = columns[a]
      let b = a
      // four partner columns at a time: column a is read once per four products
      for (; b + 3 < k; b += 4) {
        const c0 = columns[b]
        const c1 = columns[b + 1]
        const c2 = columns[b + 2]
        const c3 = columns[b + 3]
        let s0 = 0
        let s1 = 0
        let s2 = 0
        let s3 = 0
        for (let i = start; i < end; i++) {
          const v = ca[i]
          s0 += v * c0[i]
          s1 += v * c1[i]
          s2 += v * c2[i]
          s3 += v * c3[i]
        }
        const row = a * k + b
        xtx[row] += s0
        xtx[row + 1] += s1
        xtx[row + 2] += s2
        xtx[row + 3] += s3
      }
      for (; b < k; b++) {
        const cb = columns[b]
        let s = 0
        for (let i = start; i < end; i++) s += ca[i] * cb[i]
        xtx[a * k + b] += s
      }
      let sy = 0
      for (let i = start; i < end; i++) sy += ca[i] * y[i]
      xty[a] += sy
    }
  }
  for (let a = 0; a < k; a++) for (let b = 0; b < a; b++) xtx[a * k + b] = xtx[b * k + a]
  return { xtx, xty }
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
  const { xtx, xty: xy } = crossProducts(columns, y)
  const norms = new Float64Array(k)
  for (let j = 0; j < k; j++) {
    norms[j] = Math.sqrt(xtx[j * k + j])
    if (!(norms[j] > 0)) throw new EngineError('singular_design', `singular design: term "${names[j]}" is zero in every row used`)
  }
  const scaled = new Matrix(k, k)
  const xty = new Matrix(k, 1)
  for (let a = 0; a < k; a++) {
    for (let b = a; b < k; b++) {
      const v = xtx[a * k + b] / (norms[a] * norms[b])
      scaled.set(a, b, v)
      scaled.set(b, a, v)
    }
    xty.set(a, 0, xy[a] / norms[a])
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
