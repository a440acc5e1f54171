/**
 * Poisson regression (log link) with an optional offset, by iteratively reweighted least
 * squares (Nelder and Wedderburn 1972; McCullagh and Nelder 1989, Generalized Linear Models,
 * 2nd ed.):
 *
 *   log E[y_i] = o_i + x_i' b,        o_i = log(exposure_i)
 *   start mu = y + 0.1; repeat: z = eta - o + (y - mu)/mu, w = mu,
 *   b = (X' W X)^-1 X' W z, eta = X b + o, mu = exp(eta)
 *
 * until the deviance D = 2 sum [y log(y/mu) - (y - mu)] settles: |D - D_old| / (|D| + 0.1)
 * < tol (or the change is below the rounding of D itself). Each step is a weighted least
 * squares solve of ols.ts (so collinear terms are named as there). A step that makes the
 * deviance non-finite or larger is halved (Marschner 2011, R Journal 3(2):12-15).
 *
 * Covariance at the converged mu: V = (X' diag(mu) X)^-1 (Fisher information, dispersion 1).
 * Quasi-Poisson (Wedderburn 1974, quasi-likelihood): the same b, dispersion
 * phi = X2/(N - K) with Pearson X2 = sum (y - mu)^2 / mu, and SE_quasi = SE sqrt(phi).
 * Rate ratios exp(b) with Wald bounds exp(b -/+ z se) come from rateRatio().
 *
 * Before iterating, the existence of the estimate is checked (Santos Silva and Tenreyro
 * 2010, Economics Letters 107:310-312): it fails to exist ("separation") when some direction
 * d leaves x_i'd = 0 on every row with y_i > 0 and x_i'd <= 0 on the rows with y_i = 0, not
 * all 0; the likelihood then keeps rising as b moves along d, the fitted means of those zero
 * rows run to 0 and a coefficient runs to minus infinity. The direction is searched in the
 * null space of the positive rows' design by the iterated least-squares ("ReLU") scheme of
 * Correia, Guimaraes and Zylkin (2019, "Verifying the existence of maximum likelihood
 * estimates for generalized linear models", arXiv:1903.01633).
 *
 * Throws EngineError 'invalid_input' (a negative, fractional or missing count, naming the
 * first row; every count 0; a non-finite term value), 'non_positive_log' (zero or negative
 * exposure, or an offset that is not finite, naming the first row; exposureOffset() says
 * 'invalid_input' for a missing exposure), 'singular_design' (collinear terms, as ols.ts;
 * separation, naming the term or terms whose coefficient runs off and the rows whose fitted
 * means go to 0), 'too_few_observations' (N <= K) and 'not_converged' (no convergence within
 * maxIter steps, or fitted means that overflow).
 */
import { Matrix, SingularValueDecomposition } from 'ml-matrix'
import { EngineError, listSome } from './errors'
import { dot, ols } from './ols'

/** qnorm(0.975), the two-sided 95% normal critical value. */
export const Z975 = 1.959963984540054

export interface PoissonOptions {
  /** Convergence tolerance on the relative deviance change (default 1e-12). */
  tol?: number
  /** Maximum number of weighted least-squares steps (default 50). */
  maxIter?: number
  /** Row labels for messages (e.g. the periods); default "row 1", "row 2", ... */
  rowLabels?: readonly string[]
}

export interface PoissonFit {
  names: string[]
  beta: Float64Array
  /** sqrt(diag((X' diag(mu) X)^-1)). */
  se: Float64Array
  /** se * sqrt(dispersion), the quasi-Poisson standard errors. */
  seQuasi: Float64Array
  /** (X' diag(mu) X)^-1 at the converged mu; multiply by `dispersion` for quasi-Poisson. */
  vcov: Matrix
  /** Pearson X2 / (N - K). */
  dispersion: number
  deviance: number
  /** Deviance of the intercept-only model with the same offset (offset-only without an intercept). */
  nullDeviance: number
  pearsonChi2: number
  /** sum log dpois(y, mu). */
  logLik: number
  nObs: number
  dfResidual: number
  /** Weighted least-squares steps taken. */
  iterations: number
  mu: Float64Array
}

export interface RateRatio {
  rateRatio: number
  low: number
  high: number
}

/** exp(b) with Wald bounds exp(b -/+ critical * se); critical defaults to qnorm(0.975). */
export function rateRatio(beta: number, se: number, critical = Z975): RateRatio {
  return { rateRatio: Math.exp(beta), low: Math.exp(beta - critical * se), high: Math.exp(beta + critical * se) }
}

/** Rate ratios of every term, with the Poisson SEs or (quasi) the dispersion-scaled ones. */
export function rateRatios(fit: PoissonFit, options: { quasi?: boolean; critical?: number } = {}): Record<string, RateRatio> {
  const se = options.quasi ? fit.seQuasi : fit.se
  const out: Record<string, RateRatio> = {}
  fit.names.forEach((name, j) => (out[name] = rateRatio(fit.beta[j], se[j], options.critical)))
  return out
}

/**
 * log(exposure) as an offset. Throws 'invalid_input' for a missing exposure and
 * 'non_positive_log' for a zero or negative one, naming the first such row.
 */
export function exposureOffset(exposure: Float64Array, name = 'exposure', rowLabels?: readonly string[]): Float64Array {
  const out = new Float64Array(exposure.length)
  for (let i = 0; i < exposure.length; i++) {
    const v = exposure[i]
    if (Number.isNaN(v)) throw new EngineError('invalid_input', `${name} is missing in ${rowLabel(i, rowLabels)}: a count model with an exposure needs it in every row; fill it in or leave the row out`)
    if (!(v > 0) || !Number.isFinite(v)) {
      throw new EngineError('non_positive_log', `${name} is ${v} in ${rowLabel(i, rowLabels)}: the exposure must be positive (its log is the offset); correct it or leave the row out`)
    }
    out[i] = Math.log(v)
  }
  return out
}

function rowLabel(i: number, labels?: readonly string[]): string {
  return labels && labels[i] !== undefined ? `row ${i + 1} (${labels[i]})` : `row ${i + 1}`
}

function rowList(rows: number[], labels?: readonly string[]): string {
  const shown = rows.slice(0, 6).map((i) => (labels && labels[i] !== undefined ? labels[i] : String(i + 1)))
  return shown.join(', ') + (rows.length > 6 ? ` and ${rows.length - 6} more` : '')
}

/** log(n!) for a whole n >= 0: a running sum below 256, Stirling's series above. */
const LOG_FACT = (() => {
  const t = new Float64Array(256)
  for (let n = 2; n < 256; n++) t[n] = t[n - 1] + Math.log(n)
  return t
})()
function logFactorial(n: number): number {
  if (n < 256) return LOG_FACT[n]
  const n2 = n * n
  return n * Math.log(n) - n + 0.5 * Math.log(2 * Math.PI * n) + 1 / (12 * n) - 1 / (360 * n * n2) + 1 / (1260 * n * n2 * n2)
}

/** Unit deviance terms 2 [y log(y/mu) - (y - mu)] summed, and the sum of their sizes. */
function devianceOf(y: Float64Array, mu: Float64Array): { dev: number; scale: number } {
  let dev = 0
  let scale = 0
  for (let i = 0; i < y.length; i++) {
    const yi = y[i]
    const m = mu[i]
    const t = yi > 0 ? yi * Math.log(yi / m) - (yi - m) : m
    dev += t
    scale += Math.abs(yi * Math.log(m)) + m + yi
  }
  return { dev: 2 * dev, scale: 2 * scale }
}

function checkInputs(y: Float64Array, columns: Float64Array[], names: string[], offset: Float64Array | undefined, labels?: readonly string[]): void {
  const n = y.length
  if (columns.length !== names.length) throw new EngineError('invalid_input', `fitPoisson: ${columns.length} columns but ${names.length} names`)
  for (let i = 0; i < n; i++) {
    const v = y[i]
    if (Number.isNaN(v)) throw new EngineError('invalid_input', `the count is missing in ${rowLabel(i, labels)}: a Poisson model needs a count in every row; leave the row out`)
    if (v < 0) throw new EngineError('invalid_input', `the count is negative (${v}) in ${rowLabel(i, labels)}: a Poisson model needs counts 0, 1, 2, ...; use family "gaussian" for values that can be negative`)
    if (!Number.isFinite(v) || Math.floor(v) !== v) {
      throw new EngineError('invalid_input', `the count is not a whole number (${v}) in ${rowLabel(i, labels)}: a Poisson model needs counts 0, 1, 2, ...; for rates put the count as the outcome and the denominator as the exposure, or use family "gaussian"`)
    }
  }
  columns.forEach((col, j) => {
    if (col.length !== n) throw new EngineError('invalid_input', `fitPoisson: term "${names[j]}" has ${col.length} values for ${n} counts`)
    for (let i = 0; i < n; i++) {
      if (!Number.isFinite(col[i])) throw new EngineError('invalid_input', `term "${names[j]}" is ${col[i]} in ${rowLabel(i, labels)}: every term needs a finite value in every row`)
    }
  })
  if (offset) {
    if (offset.length !== n) throw new EngineError('invalid_input', `fitPoisson: the offset has ${offset.length} values for ${n} counts`)
    for (let i = 0; i < n; i++) {
      const o = offset[i]
      if (!Number.isFinite(o)) {
        const why = o === -Infinity ? 'the exposure is 0' : Number.isNaN(o) ? 'the exposure is missing or negative' : 'the exposure is infinite'
        throw new EngineError('non_positive_log', `the offset is ${o} in ${rowLabel(i, labels)} (${why}): the offset is the log of a positive exposure; correct it or leave the row out`)
      }
    }
  }
}

/** Columns scaled by their norms over all rows, so null directions are scale-free. */
function scaledRows(columns: Float64Array[], rows: number[], norms: Float64Array): Matrix {
  const m = new Matrix(rows.length, columns.length)
  rows.forEach((i, r) => columns.forEach((col, j) => m.set(r, j, col[i] / norms[j])))
  return m
}

/**
 * A direction d (in the original coefficient scale) along which the likelihood rises without
 * bound, or null when the estimate exists. See the module comment.
 */
export function separationDirection(y: Float64Array, columns: Float64Array[]): Float64Array | null {
  const k = columns.length
  const n = y.length
  const pos: number[] = []
  const zero: number[] = []
  for (let i = 0; i < n; i++) (y[i] > 0 ? pos : zero).push(i)
  if (zero.length === 0) return null
  const norms = Float64Array.from(columns, (c) => Math.sqrt(dot(c, c)) || 1)
  // Null space of the positive rows' (scaled) design: right singular vectors whose singular
  // values vanish, plus the directions beyond the rank when there are fewer rows than terms.
  let basis: Matrix
  if (pos.length === 0) basis = Matrix.eye(k)
  else {
    // at least k rows (zero rows added), so V is k x k and spans the whole coefficient space
    const xp = new Matrix(Math.max(pos.length, k), k)
    pos.forEach((i, r) => columns.forEach((col, j) => xp.set(r, j, col[i] / norms[j])))
    const svd = new SingularValueDecomposition(xp, { computeLeftSingularVectors: false })
    const sv = svd.diagonal
    const V = svd.rightSingularVectors
    const top = Math.max(...sv, 0)
    const nullCols: number[] = []
    for (let j = 0; j < k; j++) if (!(sv[j] > 1e-9 * top * Math.sqrt(k))) nullCols.push(j)
    if (nullCols.length === 0) return null
    basis = new Matrix(k, nullCols.length)
    nullCols.forEach((c, q) => {
      for (let j = 0; j < k; j++) basis.set(j, q, V.get(j, c))
    })
  }
  // A = X_0 N (zero rows in the null directions); look for c with A c >= 0, A c != 0 (then
  // d = -N c sends those rows' means to 0). ReLU iteration: u <- max(P u, 0), P the
  // projection on the columns of A, from u = 1.
  const a = scaledRows(columns, zero, norms).mmul(basis)
  const m = a.columns
  const gram = a.transpose().mmul(a)
  let inv: Matrix
  try {
    inv = new SingularValueDecomposition(gram).inverse()
  } catch {
    return null
  }
  let u = new Float64Array(zero.length).fill(1)
  const start = Math.sqrt(zero.length)
  for (let iter = 0; iter < 2000; iter++) {
    const atu = new Matrix(m, 1)
    for (let q = 0; q < m; q++) {
      let s = 0
      for (let r = 0; r < zero.length; r++) s += a.get(r, q) * u[r]
      atu.set(q, 0, s)
    }
    const c = inv.mmul(atu)
    const z = new Float64Array(zero.length)
    let zmax = 0
    let zmin = 0
    for (let r = 0; r < zero.length; r++) {
      let s = 0
      for (let q = 0; q < m; q++) s += a.get(r, q) * c.get(q, 0)
      z[r] = s
      zmax = Math.max(zmax, s)
      zmin = Math.min(zmin, s)
    }
    if (zmax <= 1e-12 * start) return null
    if (zmin >= -1e-9 * zmax) {
      const dScaled = basis.mmul(c)
      return Float64Array.from({ length: k }, (_, j) => -dScaled.get(j, 0) / norms[j])
    }
    u = z.map((v) => Math.max(v, 0))
  }
  return null
}

function separationError(y: Float64Array, columns: Float64Array[], names: string[], d: Float64Array, labels?: readonly string[]): EngineError {
  const k = columns.length
  const size = Array.from(d, (v, j) => {
    let m = 0
    for (const x of columns[j]) m = Math.max(m, Math.abs(x))
    return Math.abs(v) * m
  })
  const top = Math.max(...size)
  const terms = names.filter((_, j) => size[j] > 1e-6 * top)
  const rows: number[] = []
  for (let i = 0; i < y.length; i++) {
    let s = 0
    for (let j = 0; j < k; j++) s += columns[j][i] * d[j]
    if (s < -1e-9 * top) rows.push(i)
  }
  const which = terms.length === 1 ? `the coefficient of "${terms[0]}" runs to ${d[names.indexOf(terms[0])] < 0 ? 'minus' : 'plus'} infinity` : `a combination of the coefficients of ${listSome(terms, 8)} runs to infinity`
  return new EngineError(
    'singular_design',
    `separation: the counts are 0 in every row where ${terms.length === 1 ? `term "${terms[0]}"` : 'those terms'} can push the fitted mean down (${rows.length} row${rows.length > 1 ? 's' : ''}: ${rowList(rows, labels)}), so ${which} and those fitted means go to 0; the estimate does not exist. Drop or merge ${terms.length === 1 ? 'that term' : 'one of those terms'}, or leave those rows out`,
    terms,
  )
}

/** Weighted least squares of z on X with weights w: sqrt(w) scales both sides. */
function wls(z: Float64Array, columns: Float64Array[], names: string[], w: Float64Array) {
  const n = z.length
  const sw = Float64Array.from(w, Math.sqrt)
  const zw = new Float64Array(n)
  for (let i = 0; i < n; i++) zw[i] = z[i] * sw[i]
  const cols = columns.map((c) => {
    const out = new Float64Array(n)
    for (let i = 0; i < n; i++) out[i] = c[i] * sw[i]
    return out
  })
  return ols(zw, cols, names)
}

function linearPredictor(columns: Float64Array[], beta: Float64Array, offset: Float64Array | undefined, n: number): Float64Array {
  const eta = offset ? Float64Array.from(offset) : new Float64Array(n)
  columns.forEach((c, j) => {
    const b = beta[j]
    for (let i = 0; i < n; i++) eta[i] += b * c[i]
  })
  return eta
}

export function fitPoisson(y: Float64Array, columns: Float64Array[], names: string[], offset?: Float64Array, options: PoissonOptions = {}): PoissonFit {
  const tol = options.tol ?? 1e-12
  const maxIter = options.maxIter ?? 50
  const labels = options.rowLabels
  const n = y.length
  const k = columns.length
  checkInputs(y, columns, names, offset, labels)
  // Collinear terms and N <= K, named as for least squares.
  ols(y, columns, names)
  if (y.every((v) => v === 0)) throw new EngineError('invalid_input', `every count is 0 (${n} rows): a Poisson model needs at least one event to estimate rates; widen the series or pool categories`)
  const direction = separationDirection(y, columns)
  if (direction) throw separationError(y, columns, names, direction, labels)

  let mu: Float64Array = Float64Array.from(y, (v) => v + 0.1)
  let eta: Float64Array = Float64Array.from(mu, Math.log)
  let { dev: devOld } = devianceOf(y, mu)
  let beta: Float64Array | null = null
  let iterations = 0
  let converged = false
  let dev = devOld
  const z = new Float64Array(n)
  for (iterations = 1; iterations <= maxIter; iterations++) {
    for (let i = 0; i < n; i++) z[i] = eta[i] - (offset ? offset[i] : 0) + (y[i] - mu[i]) / mu[i]
    let next = wls(z, columns, names, mu).beta
    let etaNext = linearPredictor(columns, next, offset, n)
    let muNext = Float64Array.from(etaNext, Math.exp)
    let d = devianceOf(y, muNext)
    // Step halving while the deviance is not finite or rises (only once a previous b exists).
    const rises = (dev: number, scale: number): boolean => dev > devOld + Math.max(1e-12 * Math.abs(devOld), 64 * Number.EPSILON * scale)
    for (let h = 0; beta && h < 30 && (!Number.isFinite(d.dev) || rises(d.dev, d.scale)); h++) {
      const prev = beta
      next = next.map((v, j) => (v + prev[j]) / 2)
      etaNext = linearPredictor(columns, next, offset, n)
      muNext = Float64Array.from(etaNext, Math.exp)
      d = devianceOf(y, muNext)
    }
    if (!Number.isFinite(d.dev)) throw new EngineError('not_converged', `Poisson regression did not converge: the fitted means overflow at step ${iterations}; check the scale of the terms (${listSome(names, 8)})`)
    beta = next
    eta = etaNext
    mu = muNext
    dev = d.dev
    if (Math.abs(dev - devOld) / (Math.abs(dev) + 0.1) < tol || Math.abs(dev - devOld) <= 64 * Number.EPSILON * d.scale) {
      converged = true
      break
    }
    devOld = dev
  }
  if (!converged || !beta) {
    throw new EngineError('not_converged', `Poisson regression did not converge in ${maxIter} steps (relative deviance change still ${(Math.abs(dev - devOld) / (Math.abs(dev) + 0.1)).toExponential(2)}); the model may be too rich for the counts: drop terms or merge categories`)
  }
  // Safety net: a fitted mean that still collapsed to 0 on a zero count (numerical separation).
  const collapsed: number[] = []
  for (let i = 0; i < n; i++) if (y[i] === 0 && mu[i] < 1e-10) collapsed.push(i)
  if (collapsed.length) {
    throw new EngineError('singular_design', `separation: the fitted mean of ${collapsed.length} row${collapsed.length > 1 ? 's' : ''} with count 0 (${rowList(collapsed, labels)}) runs to 0, so a coefficient runs to minus infinity; drop or merge the terms that single out those rows, or leave them out`)
  }

  const info = wls(z, columns, names, mu)
  const vcov = info.bread
  let pearson = 0
  let logLik = 0
  for (let i = 0; i < n; i++) {
    pearson += (y[i] - mu[i]) ** 2 / mu[i]
    logLik += (y[i] > 0 ? y[i] * Math.log(mu[i]) : 0) - mu[i] - logFactorial(y[i])
  }
  const dfResidual = n - k
  const dispersion = pearson / dfResidual
  const se = Float64Array.from({ length: k }, (_, j) => Math.sqrt(vcov.get(j, j)))
  const seQuasi = se.map((s) => s * Math.sqrt(dispersion))
  return {
    names: [...names],
    beta,
    se,
    seQuasi,
    vcov,
    dispersion,
    deviance: dev,
    nullDeviance: nullDeviance(y, columns, offset),
    pearsonChi2: pearson,
    logLik,
    nObs: n,
    dfResidual,
    iterations,
    mu,
  }
}

/** Null deviance: rate sum(y)/sum(exposure) when a column is constant (an intercept), else exposure alone. */
function nullDeviance(y: Float64Array, columns: Float64Array[], offset?: Float64Array): number {
  const n = y.length
  const hasIntercept = columns.some((c) => c[0] !== 0 && c.every((v) => v === c[0]))
  const expo = offset ? Float64Array.from(offset, Math.exp) : new Float64Array(n).fill(1)
  let scale = 1
  if (hasIntercept) {
    let sy = 0
    let se = 0
    for (let i = 0; i < n; i++) {
      sy += y[i]
      se += expo[i]
    }
    scale = sy / se
  }
  return devianceOf(y, expo.map((e) => e * scale)).dev
}
