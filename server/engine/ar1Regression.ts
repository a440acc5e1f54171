/**
 * Linear regression with first-order autoregressive errors, for one series in time order:
 *
 *   y_t = x_t' b + e_t,   e_t = rho e_(t-1) + a_t,   stationary: Var(e) = sigma^2 R,  R_st = rho^|s-t|
 *
 * With Q the Prais and Winsten (1954) transformation scaled so that R^-1 = Q'Q
 * (row 1: v_1; row t >= 2: (v_t - rho v_(t-1)) / sqrt(1 - rho^2)), the GLS estimate at a
 * given rho is OLS of Qy on QX: b(rho) = (X'R^-1 X)^-1 X'R^-1 y, with RSS_R = |Q(y - Xb)|^2
 * and log|R| = (N - 1) log(1 - rho^2). The profile log-likelihoods (Harville 1974,
 * Biometrika 61:383-385, for the restricted one; Pinheiro and Bates 2000, Mixed-Effects
 * Models in S and S-PLUS):
 *
 *   "ml":   l(rho) = -N/2 (1 + log 2 pi + log(RSS_R/N)) - 1/2 log|R|
 *   "reml": l(rho) = -(N-K)/2 (1 + log 2 pi + log(RSS_R/(N-K))) - 1/2 log|R| - 1/2 log|X'R^-1 X|
 *
 * are maximised over rho in (-1, 1): a grid on atanh(rho) finds the highest point, then
 * Brent's (1973) root finder solves the analytic score dl/drho = 0 in the bracket around it
 * to 1e-12 in rho (the likelihood is flat at its top, so the score pins rho far better than
 * the likelihood values do). sigma^2 = RSS_R/N (ml) or RSS_R/(N-K) (reml); for both methods
 * V = RSS_R/(N-K) (X'R^-1 X)^-1, t tests on N - K degrees of freedom.
 *
 * "prais_winsten": the two-step estimator (Prais and Winsten 1954): OLS residuals e give
 * rho = sum_(t>=2) e_t e_(t-1) / sum_t e_t^2; OLS on the transformed rows (row 1 times
 * sqrt(1 - rho^2), rows t >= 2: v_t - rho v_(t-1), the intercept column included), with the
 * classical SEs of that regression (sigma^2 = SSR/(N-K)); no iteration, logLik null.
 *
 * Throws EngineError 'too_few_observations' (N < 10 or N < K + 3), 'invalid_input' (a
 * missing or infinite value, naming the row), 'singular_design' (collinear terms, as
 * ols.ts), and 'not_converged' when the likelihood rises towards |rho| = 1 (a unit root).
 */
import { CholeskyDecomposition, Matrix } from 'ml-matrix'
import { EngineError, listSome } from './errors'
import { type OlsFit, dot, ols } from './ols'

export type Ar1Method = 'ml' | 'reml' | 'prais_winsten'

export interface Ar1Fit {
  names: string[]
  beta: Float64Array
  se: Float64Array
  /** RSS_R/(N-K) (X'R^-1 X)^-1 (ml, reml) or the classical covariance of the transformed OLS. */
  vcov: Matrix
  rho: number
  method: Ar1Method
  /** ml: RSS_R/N; reml: RSS_R/(N-K); prais_winsten: SSR/(N-K) of the transformed regression. */
  sigma2: number
  /** The maximised (restricted) log-likelihood; null for prais_winsten. */
  logLik: number | null
  nObs: number
  dfResidual: number
  /** y - X b in the original scale. */
  residuals: Float64Array
  /** The transformed (whitened) residuals, near white noise when the model fits. */
  innovations: Float64Array
  /** Likelihood evaluations used (0 for prais_winsten). */
  evaluations: number
}

/** The grid on atanh(rho) and its end: tanh(5) = 0.99991. */
const GRID_END = 5
const GRID_STEP = 0.25

/**
 * Sample autocorrelations r_1..r_maxLag of a series (Box and Jenkins 1976):
 * r_k = sum_(t>k) (e_t - m)(e_(t-k) - m) / sum_t (e_t - m)^2, m the mean.
 */
export function residualAutocorrelation(e: Float64Array, maxLag: number): number[] {
  const n = e.length
  if (!Number.isInteger(maxLag) || maxLag < 1 || maxLag >= n) {
    throw new EngineError('invalid_input', `autocorrelation: the largest lag must be a whole number from 1 to ${n - 1} (the series has ${n} values), got ${maxLag}`)
  }
  let m = 0
  for (let t = 0; t < n; t++) m += e[t]
  m /= n
  let den = 0
  for (let t = 0; t < n; t++) den += (e[t] - m) ** 2
  const out: number[] = []
  for (let k = 1; k <= maxLag; k++) {
    let s = 0
    for (let t = k; t < n; t++) s += (e[t] - m) * (e[t - k] - m)
    out.push(den > 0 ? s / den : NaN)
  }
  return out
}

/** Q v: row 1 unchanged, rows t >= 2 (v_t - rho v_(t-1)) / sqrt(1 - rho^2). */
function whiten(v: Float64Array, rho: number, firstScale: number, restScale: number): Float64Array {
  const out = new Float64Array(v.length)
  out[0] = v[0] * firstScale
  for (let t = 1; t < v.length; t++) out[t] = (v[t] - rho * v[t - 1]) * restScale
  return out
}

function residualsOf(y: Float64Array, columns: Float64Array[], beta: Float64Array): Float64Array {
  const e = Float64Array.from(y)
  columns.forEach((c, j) => {
    const b = beta[j]
    for (let t = 0; t < e.length; t++) e[t] -= b * c[t]
  })
  return e
}

/** Sum_(t=2..N-1) u_t v_t and sum_(t>=2) (u_t v_(t-1) + u_(t-1) v_t): the pieces of u' dR^-1/drho v. */
function lagMoments(u: Float64Array, v: Float64Array): { inner: number; cross: number } {
  const n = u.length
  let inner = 0
  let cross = 0
  for (let t = 1; t < n - 1; t++) inner += u[t] * v[t]
  for (let t = 1; t < n; t++) cross += u[t] * v[t - 1] + u[t - 1] * v[t]
  return { inner, cross }
}

/**
 * d/drho of u'R^-1 v, where u'R^-1 v = (a + rho^2 b - rho c) / (1 - rho^2), a = u'v,
 * b = inner, c = cross.
 */
function dQuadratic(a: number, b: number, c: number, rho: number): number {
  const h = 1 - rho * rho
  return ((2 * rho * b - c) * h + 2 * rho * (a + rho * rho * b - rho * c)) / (h * h)
}

interface Evaluation {
  rho: number
  logLik: number
  score: number
  fit: OlsFit
  rss: number
}

/** log det of a symmetric positive definite matrix through its Cholesky factor, scaled by the diagonal. */
function logDet(m: Matrix): number {
  const k = m.rows
  const d = Array.from({ length: k }, (_, j) => Math.sqrt(m.get(j, j)))
  const s = new Matrix(k, k)
  for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) s.set(a, b, m.get(a, b) / (d[a] * d[b]))
  const L = new CholeskyDecomposition(s).lowerTriangularMatrix
  let out = 0
  for (let j = 0; j < k; j++) out += 2 * Math.log(L.get(j, j) * d[j])
  return out
}

function makeProfile(y: Float64Array, columns: Float64Array[], names: string[], reml: boolean) {
  const n = y.length
  const k = columns.length
  const m = reml ? n - k : n
  const constant = -(m / 2) * (1 + Math.log(2 * Math.PI))
  // X'X and the lag moments of X, for d/drho log|X'R^-1 X| (reml)
  const xx = new Matrix(k, k)
  const xInner = new Matrix(k, k)
  const xCross = new Matrix(k, k)
  if (reml) {
    for (let a = 0; a < k; a++) {
      for (let b = a; b < k; b++) {
        const { inner, cross } = lagMoments(columns[a], columns[b])
        const v = dot(columns[a], columns[b])
        xx.set(a, b, v)
        xx.set(b, a, v)
        xInner.set(a, b, inner)
        xInner.set(b, a, inner)
        xCross.set(a, b, cross)
        xCross.set(b, a, cross)
      }
    }
  }
  let evaluations = 0
  const evaluate = (rho: number): Evaluation => {
    evaluations++
    const h = 1 - rho * rho
    const restScale = 1 / Math.sqrt(h)
    const fit = ols(whiten(y, rho, 1, restScale), columns.map((c) => whiten(c, rho, 1, restScale)), names)
    const rss = fit.ssr
    const logDetR = (n - 1) * Math.log(h)
    let logLik = constant - (m / 2) * Math.log(rss / m) - logDetR / 2
    // score: envelope theorem on RSS_R(rho) at b(rho), plus d log|R| and (reml) d log|X'R^-1 X|
    const e = residualsOf(y, columns, fit.beta)
    const { inner, cross } = lagMoments(e, e)
    const dRss = dQuadratic(dot(e, e), inner, cross, rho)
    let score = (-(m / 2) * dRss) / rss + ((n - 1) * rho) / h
    if (reml) {
      logLik += logDet(fit.bread) / 2
      let trace = 0
      for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) trace += fit.bread.get(a, b) * dQuadratic(xx.get(b, a), xInner.get(b, a), xCross.get(b, a), rho)
      score -= trace / 2
    }
    return { rho, logLik, score, fit, rss }
  }
  return { evaluate, count: () => evaluations }
}

/**
 * Brent's (1973, Algorithms for Minimization without Derivatives, ch. 4) root finder for f on
 * [a, b] with f(a), f(b) of opposite signs.
 */
function brentRoot(f: (x: number) => number, a: number, b: number, fa: number, fb: number, tol: number): number {
  let c = a
  let fc = fa
  let d = b - a
  let e = d
  for (let iter = 0; iter < 200; iter++) {
    if (Math.sign(fb) === Math.sign(fc)) {
      c = a
      fc = fa
      d = b - a
      e = d
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b
      b = c
      c = a
      fa = fb
      fb = fc
      fc = fa
    }
    const tol1 = 2 * Number.EPSILON * Math.abs(b) + tol / 2
    const xm = (c - b) / 2
    if (Math.abs(xm) <= tol1 || fb === 0) return b
    if (Math.abs(e) >= tol1 && Math.abs(fa) > Math.abs(fb)) {
      const s = fb / fa
      let p: number
      let q: number
      if (a === c) {
        p = 2 * xm * s
        q = 1 - s
      } else {
        const qq = fa / fc
        const r = fb / fc
        p = s * (2 * xm * qq * (qq - r) - (b - a) * (r - 1))
        q = (qq - 1) * (r - 1) * (s - 1)
      }
      if (p > 0) q = -q
      else p = -p
      if (2 * p < Math.min(3 * xm * q - Math.abs(tol1 * q), Math.abs(e * q))) {
        e = d
        d = p / q
      } else {
        d = xm
        e = d
      }
    } else {
      d = xm
      e = d
    }
    a = b
    fa = fb
    b += Math.abs(d) > tol1 ? d : xm > 0 ? tol1 : -tol1
    fb = f(b)
  }
  return b
}

/** Golden-section search for the maximum of f on [a, b] (fallback when the score has no sign change). */
function goldenMax(f: (x: number) => number, a: number, b: number, tol: number): number {
  const g = (Math.sqrt(5) - 1) / 2
  let x1 = b - g * (b - a)
  let x2 = a + g * (b - a)
  let f1 = f(x1)
  let f2 = f(x2)
  while (b - a > tol) {
    if (f1 >= f2) {
      b = x2
      x2 = x1
      f2 = f1
      x1 = b - g * (b - a)
      f1 = f(x1)
    } else {
      a = x1
      x1 = x2
      f1 = f2
      x2 = a + g * (b - a)
      f2 = f(x2)
    }
  }
  return (a + b) / 2
}

function checkSeries(y: Float64Array, columns: Float64Array[], names: string[]): void {
  const n = y.length
  const k = columns.length
  if (columns.length !== names.length) throw new EngineError('invalid_input', `fitAr1: ${columns.length} columns but ${names.length} names`)
  if (n < 10 || n < k + 3) {
    throw new EngineError('too_few_observations', `too few observations for AR(1) errors: ${n} periods for ${k} terms (${listSome(names, 8)}); need at least 10 periods and K + 3 = ${k + 3}; use Newey-West errors or a longer series`)
  }
  const bad = (v: Float64Array, what: string): void => {
    for (let t = 0; t < n; t++) if (!Number.isFinite(v[t])) throw new EngineError('invalid_input', `${what} is ${v[t]} in row ${t + 1}: AR(1) errors need a complete series without gaps; fill the value or shorten the series`)
  }
  bad(y, 'the outcome')
  columns.forEach((c, j) => {
    if (c.length !== n) throw new EngineError('invalid_input', `fitAr1: term "${names[j]}" has ${c.length} values for ${n} outcomes`)
    bad(c, `term "${names[j]}"`)
  })
}

function finish(method: Ar1Method, names: string[], y: Float64Array, columns: Float64Array[], fit: OlsFit, rho: number, varScale: number, sigma2: number, logLik: number | null, evaluations: number): Ar1Fit {
  const n = y.length
  const k = columns.length
  const vcov = fit.bread.clone().mul(varScale)
  return {
    names: [...names],
    beta: fit.beta,
    se: Float64Array.from({ length: k }, (_, j) => Math.sqrt(vcov.get(j, j))),
    vcov,
    rho,
    method,
    sigma2,
    logLik,
    nObs: n,
    dfResidual: n - k,
    residuals: residualsOf(y, columns, fit.beta),
    innovations: fit.residuals,
    evaluations,
  }
}

/** Prais-Winsten two-step: rho from the OLS residuals, then OLS on the transformed rows. */
function praisWinsten(y: Float64Array, columns: Float64Array[], names: string[]): Ar1Fit {
  const n = y.length
  const k = columns.length
  const e = ols(y, columns, names).residuals
  let num = 0
  for (let t = 1; t < n; t++) num += e[t] * e[t - 1]
  const rho = num / dot(e, e)
  const first = Math.sqrt(1 - rho * rho)
  const fit = ols(whiten(y, rho, first, 1), columns.map((c) => whiten(c, rho, first, 1)), names)
  const s2 = fit.ssr / (n - k)
  return finish('prais_winsten', names, y, columns, fit, rho, s2, s2, null, 0)
}

export function fitAr1(y: Float64Array, columns: Float64Array[], names: string[], method: Ar1Method): Ar1Fit {
  checkSeries(y, columns, names)
  // collinear terms are named on the untransformed design
  ols(y, columns, names)
  if (method === 'prais_winsten') return praisWinsten(y, columns, names)
  const n = y.length
  const k = columns.length
  const profile = makeProfile(y, columns, names, method === 'reml')
  const steps = Math.round(GRID_END / GRID_STEP)
  const grid: Evaluation[] = []
  for (let i = -steps; i <= steps; i++) grid.push(profile.evaluate(Math.tanh(i * GRID_STEP)))
  let best = 0
  for (let i = 1; i < grid.length; i++) if (grid[i].logLik > grid[best].logLik) best = i
  const edge = (best === 0 && grid[0].score < 0) || (best === grid.length - 1 && grid[best].score > 0)
  if (edge) {
    throw new EngineError(
      'not_converged',
      `AR(1) errors: the ${method === 'ml' ? '' : 'restricted '}likelihood keeps rising towards rho = ${best === 0 ? '-1' : '1'} (at rho = ${grid[best].rho.toFixed(5)}), so the errors look non-stationary (a unit root); model the trend or the level shifts, difference the series, or use Newey-West errors`,
    )
  }
  // bracket the root of the score around the best grid point
  const lo = grid[Math.max(best - 1, 0)]
  const hi = grid[Math.min(best + 1, grid.length - 1)]
  const score = (rho: number): number => profile.evaluate(rho).score
  let rho: number
  if (lo.score > 0 && hi.score < 0) {
    const mid = grid[best]
    rho = mid.score > 0 ? brentRoot(score, mid.rho, hi.rho, mid.score, hi.score, 1e-13) : mid.score < 0 ? brentRoot(score, lo.rho, mid.rho, lo.score, mid.score, 1e-13) : mid.rho
  } else {
    rho = goldenMax((r) => profile.evaluate(r).logLik, lo.rho, hi.rho, 1e-10)
  }
  const at = profile.evaluate(rho)
  const sigma2 = at.rss / (method === 'ml' ? n : n - k)
  return finish(method, names, y, columns, at.fit, rho, at.rss / (n - k), sigma2, at.logLik, profile.count())
}

/**
 * The profile (restricted) log-likelihood of "ml" or "reml" at a given rho, and its score
 * dl/drho, as maximised by fitAr1 (for charts of the profile and for checks).
 */
export function ar1Profile(y: Float64Array, columns: Float64Array[], names: string[], method: 'ml' | 'reml', rho: number): { logLik: number; score: number } {
  checkSeries(y, columns, names)
  if (!(Math.abs(rho) < 1)) throw new EngineError('invalid_input', `AR(1) profile: rho must lie strictly between -1 and 1, got ${rho}`)
  const { logLik, score } = makeProfile(y, columns, names, method === 'reml').evaluate(rho)
  return { logLik, score }
}
