/**
 * Simplex weights of a weighted comparison (synthetic control; Abadie, Diamond and
 * Hainmueller 2010, JASA 105:493-505): for a target series y (T rows) and J donor series
 * Y = [y_1 .. y_J],
 *
 *   w = argmin_w  sum_t (y_t - sum_j w_j y_jt)^2   subject to  w_j >= 0,  sum_j w_j = 1.
 *
 * Route:
 * 1. Conditioning. On the simplex, subtracting any per-row constant c_t from the target and
 *    every donor leaves each residual y_t - sum_j w_j y_jt unchanged, and dividing all of
 *    them by one scale s divides the objective by s^2. So the rows are centred on their
 *    mean over target and donors and divided by the root mean square of what is left:
 *    outcomes in the thousands, in logs or near a common level give the same, well-scaled
 *    problem (a raw log series near 4 makes Y'Y nearly rank one).
 * 2. Quadratic program: the dual method of Goldfarb and Idnani (1983, Math Programming
 *    27:1-33) in the npm package `quadprog`, on the centred and scaled rows of step 1,
 *    with D = 2 Y'Y + r max(diag(2 Y'Y)) I (r =
 *    options.ridge, default 1e-10, so D is positive definite when T < J), d = 2 Y'y, one
 *    equality (sum w = 1, meq = 1) and J bounds w_j >= 0. Up to 40 donors the program
 *    takes them all. Beyond that it takes the 40 donors closest to the target (smallest
 *    ||y - y_j||) as a working set: its cost grows like J^3 (tens of milliseconds for 100
 *    donors, too slow to refit every placebo), and step 3 is exact over all donors. When
 *    step 3 cannot finish, the donors whose multipliers are most negative (up to 20 a
 *    round) join the working set and the program runs again.
 * 3. Polish on the support S = {j : w_j > 1e-7 max w}: the equality-constrained least
 *    squares min ||y - Y_S w_S|| subject to 1'w_S = 1, i.e. the system
 *      [2 Y_S'Y_S, 1; 1', 0] [w_S; lambda] = [2 Y_S'y; 1],
 *    solved without forming Y_S'Y_S (one weight eliminated by the equality, then a
 *    Householder QR least-squares solve; Golub and Van Loan, Matrix Computations, 5.3 and
 *    12.1). If a polished weight goes negative, the step towards the polished point stops
 *    where the first weight reaches zero, that donor leaves S and the solve repeats; a donor
 *    off S whose multiplier is negative joins S (the active-set rule of Lawson and Hanson
 *    1974, Solving Least Squares Problems, ch. 23), over all J donors. This removes the
 *    ridge and the solver's rounding: the weights are exact to rounding on their support
 *    and satisfy the optimality conditions for every donor.
 * 4. Uniqueness certificate: with the multipliers g_j = 2 (Y'(Yw - y))_j + lambda (0 on S,
 *    >= 0 off S at the optimum), the minimiser is unique when every g_j off S is strictly
 *    positive (relative tolerance 1e-9) and [Y_S; 1'] has full column rank |S| (no other
 *    weights on S give the same fit). Where some multipliers off S are zero (an exact fit
 *    makes them all zero) the certificate takes those donors Z in: every minimiser has the
 *    same fitted values and multipliers, so it can only use donors in S and Z, and full
 *    column rank of [Y_{S+Z}; 1'] leaves it no room. `unique` reports whether the
 *    certificate holds (it is sufficient, not necessary); when [Y_S; 1'] is rank deficient
 *    the polish is skipped and the solver's weights are kept.
 *    kktMinOffSupport is min_{j not in S} g_j in the data's units (null when S holds every
 *    donor).
 *
 * Covariates (the caller's choice, see designs/synthetic.ts): Abadie, Diamond and Hainmueller
 * (2010) match a vector of predictors through a diagonal V matrix chosen by an outer
 * optimisation. We keep one quadratic program: the caller appends one row per covariate
 * (its pre-period mean divided by its spread across units, put on the outcome's scale) to
 * the target and to every donor, so each appended row counts like one more pre-period. This is a documented
 * simplification (equal weights on standardised predictor rows, no nested V optimisation);
 * the rows are ordinary rows here.
 *
 * rmspe = sqrt(mean over the rows given of (y_t - sum_j w_j y_jt)^2), in the data's units.
 *
 * Throws EngineError 'invalid_input' (no donors, lengths that differ, values that are not
 * finite, a ridge that is not a non-negative number) and 'singular_design' when the solver
 * fails.
 */
import quadprog from 'quadprog'
import { EngineError } from './errors'

export interface SimplexFit {
  /** One weight per donor, in donor order: >= 0, summing to 1. */
  weights: Float64Array
  /** Root mean squared difference between target and weighted donors over the rows given. */
  rmspe: number
  /** Donor indices with positive weight, ascending. */
  support: number[]
  /** True when the uniqueness certificate holds (see the module comment). */
  unique: boolean
  /** Smallest KKT multiplier off the support (data units), null when every donor is in it. */
  kktMinOffSupport: number | null
}

/** Share of the largest weight below which a solver weight counts as zero. */
const SUPPORT_SHARE = 1e-7
/** Relative size of a column's new direction below which it counts as dependent. */
const RANK_TOL = 1e-10
/** Relative tolerance of the multipliers in the uniqueness certificate. */
const KKT_TOL = 1e-9
/** Donors in the first quadratic program (all of them up to this many), and how many may join per round. */
const WORKING_SET = 40
const WORKING_SET_STEP = 20

interface LeastSquares {
  /** Coefficients, or null when the columns are rank deficient. */
  coef: Float64Array | null
}

/**
 * min ||b - A v|| by Householder QR; A given as columns of length T. Returns null
 * coefficients when a column's component orthogonal to the earlier columns is below
 * RANK_TOL of its length (or there are more columns than rows).
 */
function leastSquaresQr(columns: Float64Array[], b: Float64Array): LeastSquares {
  const m = columns.length
  const T = b.length
  if (m === 0) return { coef: new Float64Array(0) }
  if (m > T) return { coef: null }
  const a = columns.map((c) => c.slice())
  const rhs = b.slice()
  const norms = new Float64Array(m)
  let scale = 0
  for (let k = 0; k < m; k++) {
    const c = a[k]
    let s = 0
    for (let i = 0; i < T; i++) s += c[i] * c[i]
    norms[k] = Math.sqrt(s)
    if (norms[k] > scale) scale = norms[k]
  }
  const diag = new Float64Array(m)
  for (let k = 0; k < m; k++) {
    const col = a[k]
    let alpha = 0
    for (let i = k; i < T; i++) alpha += col[i] * col[i]
    alpha = Math.sqrt(alpha)
    if (!(alpha > RANK_TOL * norms[k]) || !(alpha > RANK_TOL * RANK_TOL * scale)) return { coef: null }
    if (col[k] > 0) alpha = -alpha
    // Householder vector v = x - alpha e_k, kept in col[k..T-1]; H = I - 2 vv'/v'v
    col[k] -= alpha
    let vv = 0
    for (let i = k; i < T; i++) vv += col[i] * col[i]
    diag[k] = alpha
    for (let j = k + 1; j <= m; j++) {
      const x = j < m ? a[j] : rhs
      let s = 0
      for (let i = k; i < T; i++) s += col[i] * x[i]
      const f = (2 * s) / vv
      for (let i = k; i < T; i++) x[i] -= f * col[i]
    }
  }
  const coef = new Float64Array(m)
  for (let k = m - 1; k >= 0; k--) {
    let s = rhs[k]
    for (let j = k + 1; j < m; j++) s -= a[j][k] * coef[j]
    coef[k] = s / diag[k]
  }
  return { coef }
}

/**
 * Equality-constrained least squares on the support: min ||y - sum_{j in S} w_j Y_j|| with
 * sum w_j = 1, by eliminating the weight of `ref`. Null when [Y_S; 1'] is rank deficient.
 */
function polishOnSupport(y: Float64Array, Y: Float64Array[], support: number[], ref: number): Float64Array | null {
  const J = Y.length
  const w = new Float64Array(J)
  if (support.length === 1) {
    w[support[0]] = 1
    return w
  }
  const others = support.filter((j) => j !== ref)
  const base = Y[ref]
  const T = y.length
  const b = new Float64Array(T)
  for (let t = 0; t < T; t++) b[t] = y[t] - base[t]
  const cols = others.map((j) => {
    const c = new Float64Array(T)
    const src = Y[j]
    for (let t = 0; t < T; t++) c[t] = src[t] - base[t]
    return c
  })
  const { coef } = leastSquaresQr(cols, b)
  if (!coef) return null
  let rest = 1
  others.forEach((j, k) => {
    w[j] = coef[k]
    rest -= coef[k]
  })
  w[ref] = rest
  return w
}

function residualOf(y: Float64Array, Y: Float64Array[], w: Float64Array): Float64Array {
  const r = new Float64Array(y.length)
  for (let t = 0; t < r.length; t++) r[t] = -y[t]
  for (let j = 0; j < Y.length; j++) {
    const wj = w[j]
    if (wj === 0) continue
    const col = Y[j]
    for (let t = 0; t < r.length; t++) r[t] += wj * col[t]
  }
  return r
}

/** KKT multipliers g_j = 2 Y_j'r + lambda, lambda fitted so that g is 0 on the support on average. */
function multipliers(Y: Float64Array[], r: Float64Array, support: number[]): Float64Array {
  const g = new Float64Array(Y.length)
  for (let j = 0; j < Y.length; j++) {
    const col = Y[j]
    let s = 0
    for (let t = 0; t < r.length; t++) s += col[t] * r[t]
    g[j] = 2 * s
  }
  let lambda = 0
  for (const j of support) lambda -= g[j]
  lambda /= support.length
  for (let j = 0; j < g.length; j++) g[j] += lambda
  return g
}

function supportOf(w: Float64Array): number[] {
  const out: number[] = []
  for (let j = 0; j < w.length; j++) if (w[j] > 0) out.push(j)
  return out
}

/** Scaled problem shared by the steps: rows centred and scaled, with Y'y and ||Y_j||^2. */
interface Problem {
  y: Float64Array
  Y: Float64Array[]
  J: number
  cross: Float64Array
  sq: Float64Array
  /** max_j 2 ||Y_j||^2: the scale of the multipliers. */
  maxDiag: number
}

function makeProblem(y: Float64Array, Y: Float64Array[]): Problem {
  const J = Y.length
  const T = y.length
  const cross = new Float64Array(J)
  const sq = new Float64Array(J)
  let maxDiag = 0
  for (let j = 0; j < J; j++) {
    const c = Y[j]
    let sy = 0
    let ss = 0
    for (let t = 0; t < T; t++) {
      sy += c[t] * y[t]
      ss += c[t] * c[t]
    }
    cross[j] = sy
    sq[j] = ss
    maxDiag = Math.max(maxDiag, 2 * ss)
  }
  return { y, Y, J, cross, sq, maxDiag: maxDiag > 0 ? maxDiag : 1 }
}

/**
 * The quadratic program over the donors in `set` (quadprog, 1-indexed arrays): D = 2 Y_set'Y_set
 * + ridge max(diag) I, d = 2 Y_set'y, sum w = 1 (meq = 1), w >= 0. Returns J weights, zero
 * outside `set`, clipped by the support rule and renormalised.
 */
function solveQuadraticProgram(p: Problem, set: number[], ridge: number): Float64Array {
  const n = set.length
  const T = p.y.length
  const D: number[][] = [[]]
  const d: number[] = [0]
  let maxDiag = 0
  for (let a = 1; a <= n; a++) D.push(new Array(n + 1).fill(0))
  for (let a = 0; a < n; a++) {
    const ca = p.Y[set[a]]
    for (let b = 0; b <= a; b++) {
      const cb = p.Y[set[b]]
      let s = 0
      for (let t = 0; t < T; t++) s += ca[t] * cb[t]
      D[a + 1][b + 1] = 2 * s
      D[b + 1][a + 1] = 2 * s
    }
    d.push(2 * p.cross[set[a]])
    maxDiag = Math.max(maxDiag, D[a + 1][a + 1])
  }
  const add = ridge * (maxDiag > 0 ? maxDiag : 1)
  for (let a = 1; a <= n; a++) D[a][a] += add
  // constraints A'w >= b0: column 1 is sum w = 1 (the equality), columns 2..n+1 are w >= 0
  const A: number[][] = [[]]
  for (let a = 1; a <= n; a++) {
    const row: number[] = new Array(n + 2).fill(0)
    row[1] = 1
    row[a + 1] = 1
    A.push(row)
  }
  const b0: number[] = new Array(n + 2).fill(0)
  b0[1] = 1
  const res = quadprog.solveQP(D, d, A, b0, 1)
  if (res.message || !res.solution) {
    throw new EngineError('singular_design', `weights: the quadratic program failed (${res.message || 'no solution'}); check for donors with identical or constant series`)
  }
  let max = 0
  for (let a = 1; a <= n; a++) max = Math.max(max, res.solution[a])
  const w = new Float64Array(p.J)
  let sum = 0
  for (let a = 1; a <= n; a++) {
    const v = res.solution[a]
    if (v > SUPPORT_SHARE * max) {
      w[set[a - 1]] = v
      sum += v
    }
  }
  for (const j of set) w[j] /= sum
  return w
}

interface Polished {
  w: Float64Array
  /** True when every multiplier is >= -tolerance: the weights are optimal over all donors. */
  optimal: boolean
  /** False when [Y_S; 1'] lost full column rank on the way. */
  fullRank: boolean
}

/** Step 3: exact solve on the support with the active-set rule, over all donors. */
function polish(p: Problem, start: Float64Array, tolG: number): Polished {
  const { y, Y, J } = p
  let w: Float64Array = Float64Array.from(start)
  let support = supportOf(w)
  for (let iter = 0; iter < 4 * J + 20; iter++) {
    let ref = support[0]
    for (const j of support) if (w[j] > w[ref]) ref = j
    const z = polishOnSupport(y, Y, support, ref)
    if (!z) return { w, optimal: false, fullRank: false }
    const negative = support.filter((j) => !(z[j] > 0))
    if (negative.length) {
      // step from the feasible w towards z until the first weight reaches zero
      let alpha = 1
      for (const j of negative) alpha = Math.min(alpha, w[j] / (w[j] - z[j]))
      for (const j of support) w[j] += alpha * (z[j] - w[j])
      let leaving = negative[0]
      for (const j of negative) if (w[j] < w[leaving]) leaving = j
      w[leaving] = 0
      for (const j of support) if (w[j] < 0) w[j] = 0
      support = supportOf(w)
      continue
    }
    w = z
    const g = multipliers(Y, residualOf(y, Y, w), support)
    let enter = -1
    for (let j = 0; j < J; j++) if (w[j] === 0 && g[j] < -tolG && (enter < 0 || g[j] < g[enter])) enter = j
    if (enter < 0) return { w, optimal: true, fullRank: true }
    support = [...support, enter].sort((a, b) => a - b)
  }
  return { w, optimal: false, fullRank: true }
}

/**
 * Donors given to the quadratic program first: all of them up to WORKING_SET, else the
 * WORKING_SET closest to the target (smallest ||y - Y_j||).
 */
function firstWorkingSet(p: Problem): number[] {
  const all = [...Array(p.J).keys()]
  if (p.J <= WORKING_SET) return all
  const dist = all.map((j) => p.sq[j] - 2 * p.cross[j])
  return all.sort((a, b) => dist[a] - dist[b] || a - b).slice(0, WORKING_SET).sort((a, b) => a - b)
}

/** w >= 0, sum w = 1, minimising sum_t (target_t - sum_j w_j donors[j]_t)^2 over the rows given. */
export function fitSimplexWeights(target: Float64Array, donors: Float64Array[], options: { ridge?: number } = {}): SimplexFit {
  const J = donors.length
  const T = target.length
  if (J === 0) throw new EngineError('invalid_input', 'fitSimplexWeights: no donors; give at least one donor series')
  if (T === 0) throw new EngineError('invalid_input', 'fitSimplexWeights: the target has no rows; give at least one pre-period')
  const ridge = options.ridge ?? 1e-10
  if (!(ridge >= 0) || !Number.isFinite(ridge)) throw new EngineError('invalid_input', `fitSimplexWeights: ridge must be a non-negative number, got ${ridge}`)
  donors.forEach((d, j) => {
    if (d.length !== T) throw new EngineError('invalid_input', `fitSimplexWeights: donor ${j} has ${d.length} rows, the target ${T}`)
  })
  for (let j = -1; j < J; j++) {
    const arr = j < 0 ? target : donors[j]
    for (let t = 0; t < T; t++) {
      if (!Number.isFinite(arr[t])) {
        throw new EngineError('invalid_input', `fitSimplexWeights: ${j < 0 ? 'the target' : `donor ${j}`} has a value that is not a finite number in row ${t} (${arr[t]}); leave out rows or donors with missing values`)
      }
    }
  }

  // 1. centre each row on its mean over target and donors, scale by the RMS of the rest
  const center = new Float64Array(T)
  for (let t = 0; t < T; t++) {
    let s = target[t]
    for (let j = 0; j < J; j++) s += donors[j][t]
    center[t] = s / (J + 1)
  }
  let ss = 0
  for (let t = 0; t < T; t++) {
    ss += (target[t] - center[t]) ** 2
    for (let j = 0; j < J; j++) ss += (donors[j][t] - center[t]) ** 2
  }
  let scale = Math.sqrt(ss / (T * (J + 1)))
  if (!(scale > 0) || !Number.isFinite(scale)) scale = 1
  const standardise = (src: Float64Array): Float64Array => {
    const out = new Float64Array(T)
    for (let t = 0; t < T; t++) out[t] = (src[t] - center[t]) / scale
    return out
  }
  const y = standardise(target)
  const Y = donors.map(standardise)

  const problem = makeProblem(y, Y)
  const tolG = KKT_TOL * problem.maxDiag
  let w: Float64Array
  let fullRank = true
  if (J === 1) w = Float64Array.of(1)
  else {
    // 2. the quadratic program on a working set of donors, 3. the polish over all donors;
    // if the polish cannot finish, donors whose multiplier says they would lower the
    // objective join the working set and the program runs again
    let set = firstWorkingSet(problem)
    for (;;) {
      const solver = solveQuadraticProgram(problem, set, ridge)
      const polished = polish(problem, solver, tolG)
      if (polished.optimal) {
        w = polished.w
        fullRank = true
        break
      }
      w = solver
      fullRank = polished.fullRank
      const g = multipliers(Y, residualOf(y, Y, w), supportOf(w))
      const inSet = new Uint8Array(J)
      for (const j of set) inSet[j] = 1
      const join = [...Array(J).keys()].filter((j) => !inSet[j] && g[j] < -tolG).sort((a, b) => g[a] - g[b]).slice(0, WORKING_SET_STEP)
      if (!join.length) break
      set = [...set, ...join].sort((a, b) => a - b)
    }
  }

  // 4. certificate, in the data's units
  const support = supportOf(w)
  const g = multipliers(Y, residualOf(y, Y, w), support)
  let kktMin: number | null = null
  const flat: number[] = []
  for (let j = 0; j < J; j++) {
    if (w[j] !== 0) continue
    kktMin = kktMin === null ? g[j] : Math.min(kktMin, g[j])
    if (!(g[j] > tolG)) flat.push(j)
  }
  let unique = fullRank
  if (unique && flat.length) {
    // zero multipliers off S (an exact fit, for one): any other minimiser could only use
    // those donors too, so the rank test takes them in
    const wider = [...support, ...flat].sort((a, b) => a - b)
    unique = polishOnSupport(y, Y, wider, support[0]) !== null
  }
  const r = residualOf(target, donors, w)
  let ssr = 0
  for (let t = 0; t < T; t++) ssr += r[t] * r[t]
  const rmspe = Math.sqrt(ssr / T)
  return { weights: w, rmspe, support, unique, kktMinOffSupport: kktMin === null ? null : kktMin * scale * scale }
}
