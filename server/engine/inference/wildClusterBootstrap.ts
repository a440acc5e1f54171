/**
 * Restricted wild cluster bootstrap-t (Cameron, Gelbach and Miller 2008, "Bootstrap-based
 * improvements for inference with clustered errors", REStat 90: 414-427), computed with the
 * fast algorithm of Roodman, MacKinnon, Nielsen and Webb (2019, "Fast and wild", Stata
 * Journal 19(1): 4-60): no model is refitted per draw; per-cluster quantities are built once
 * and each draw costs O(G^2) (O(G) when enumerating).
 *
 * Model y = beta x + Z gamma + D alpha + e, D the absorbed fixed effects (or nothing, with the
 * intercept among Z); ~ is the within transformation M_D (withinTransform.ts), so by
 * Frisch-Waugh-Lovell the tilde columns give the slopes and residuals of the dummy
 * regression. Under H0: beta = beta0 the restricted residuals are
 *
 *   ur = M_Z~ (y~ - beta0 x~),   yr = y - ur,   y*(w) = yr + w_g(i) ur_i  (one weight per cluster).
 *
 * Refitting the full model on y* gives, with a = M_Z~ x~ / (x~' M_Z~ x~) and B = (X~'X~)^-1,
 *
 *   beta* - beta0 = sum_g w_g d_g,                 d_g = sum_{i in g} a_i ur_i
 *   u*(w)         = M_D(w o ur) - X~ B X~'(w o ur)
 *   s_h(w)        = sum_{i in h} a_i u*_i = sum_g S_hg w_g
 *   S_hg          = a_h' [M_D(ur o 1_g)]_h - (X~_h' a_h)' B (X~_g' ur_g)
 *   t*(w)         = (w'd) / sqrt(c sum_h s_h(w)^2)
 *
 * c is the CR1 factor of clusteredCovariance.ts for the model's smallSample (it cancels in p),
 * so the all-ones draw reproduces the t of regression.ts exactly. M_D(ur o 1_g):
 *   - no fixed effects, or unit effects with units nested in clusters: ur o 1_g (ur has zero
 *     mean within every unit), so the first part of S is diagonal;
 *   - two-way effects on a balanced panel with units nested in clusters:
 *     ur_it 1[i in g] - m_g(t), m_g(t) = (1/U) sum_{i in g} ur_it;
 *   - otherwise (unbalanced two-way, units that change cluster): the absorber's own demeaning
 *     of a o 1_h for every cluster h (G demeanings; exact, slower).
 * ur, d and S are affine in beta0: ur = ua - beta0 ub with ub = M_Z~ x~ and ua = M_Z~ y~ =
 * u + estimate ub (u the full model's residuals), so they are built once as two parts, each
 * draw keeps five numbers, and the same draws give t*(beta0) for every beta0 of the interval.
 *
 * p = #{draws: |t*| >= |t| (1 - 1e-9)} / draws (ties count as exceedances); every weight
 * vector is enumerated when 2^G (Rademacher, +-1) or 6^G (Webb 2014, "Reworking wild
 * bootstrap based inference for clustered errors", Queen's Economics Department WP 1315:
 * +-sqrt(3/2), +-1, +-sqrt(1/2)) is at most `draws`; otherwise the first draw is the all-ones
 * vector and the rest come from seededRandom(seed). Enumeration order: draw b written in base
 * 2 or 6, digit g-1 (least significant first) picks cluster g's weight; Rademacher digit 0 is
 * +1 and 1 is -1, Webb digits 0..5 are the six values in ascending order.
 *
 * Interval at `level` by test inversion: the beta0 with p(beta0) > 1 - level, each bound found
 * by bisection (to 1e-6 SE) after bracketing from the analytic half-width t_{G-1} SE, doubled
 * until rejected; a bound is null (with the reason) when nothing within 1,000 SEs is rejected.
 * p(beta0) need not be monotone: the bound is the first crossing found from the estimate out.
 *
 * Throws EngineError 'single_cluster' (G < 2), 'invalid_spec' (draws, weights, level, seed or
 * keep out of range), 'invalid_input' (tested term absent, cluster indices not dense or not
 * matching the rows) and whatever regression.ts throws for the model.
 */
import { CholeskyDecomposition, Matrix } from 'ml-matrix'
import type { SmallSample } from '../../../shared/engine/spec'
import { clusterFactor } from '../clusteredCovariance'
import { tQuantileAt } from '../distributions'
import { EngineError, listSome } from '../errors'
import { dot, ols } from '../ols'
import { seededRandom } from '../random'
import { type ModelFit, type Term, fitLinearModel } from '../regression'
import { type AbsorbSpec, makeAbsorber } from '../withinTransform'

export type BootstrapWeights = 'rademacher' | 'webb'

export interface WildBootstrapModel {
  y: Float64Array
  /** The model's terms (regression.ts), the tested term among them. */
  terms: Term[]
  /** Name of the tested term. */
  test: string
  /** Add an intercept (ignored when fixed effects are absorbed). */
  intercept: boolean
  absorb?: AbsorbSpec
  /** Dense cluster index 0..nClusters-1 per row. */
  cluster: Int32Array
  nClusters: number
  /** The CR1 variant (clusteredCovariance.ts). */
  smallSample: SmallSample
}

export interface WildBootstrapOptions {
  /** Number of draws (the all-ones draw included); every weight vector when weights^G <= draws. */
  draws: number
  weights: BootstrapWeights
  seed: number
  /** Coverage of the interval, e.g. 0.95. */
  level: number
  /** beta0 of H0 (default 0). */
  nullValue?: number
  /** Invert the test for an interval (default true). */
  interval?: boolean
  /** How many t* to return in firstDraws (default 8). */
  keep?: number
}

export interface WildBootstrapResult {
  estimate: number
  /** CR1 standard error, as regression.ts computes it. */
  se: number
  /** (estimate - nullValue) / se. */
  t: number
  nullValue: number
  /** Symmetric p: share of draws with |t*| >= |t|. */
  p: number
  /** 2 min(#{t* <= t}, #{t* >= t}) / draws, capped at 1. */
  pEqualTailed: number
  level: number
  ciLow: number | null
  ciHigh: number | null
  /** Why a bound is null, or null when both exist. */
  ciReason: string | null
  draws: number
  enumerated: boolean
  weights: BootstrapWeights
  nClusters: number
  /** Draw counts behind the p-values (ties within the relative slack count on both sides). */
  counts: { absGe: number; ge: number; le: number; ties: number }
  /** Smallest | |t*| - |t| | / |t| over the draws not tied with t (null if none). */
  minRelGap: number | null
  /** t* of the first `keep` draws in enumeration (or draw) order. */
  firstDraws: number[]
  /** How M_D(ur o 1_g) was formed. */
  path: BootstrapPath
}

export type BootstrapPath = 'diagonal' | 'two_way_balanced' | 'general'

/** Everything the draws need, independent of beta0, weights and seed. */
export interface PreparedWildBootstrap {
  estimate: number
  se: number
  /** CR1 scalar c. */
  factor: number
  nObs: number
  nClusters: number
  /** d_g = dA_g - beta0 dB_g. */
  dA: Float64Array
  dB: Float64Array
  /** S_hg = SA - beta0 SB, row-major [h * G + g]. */
  SA: Float64Array
  SB: Float64Array
  path: BootstrapPath
}

const RADEMACHER = [1, -1]
const WEBB = [-Math.sqrt(1.5), -1, -Math.SQRT1_2, Math.SQRT1_2, 1, Math.sqrt(1.5)]
/** Relative slack under which |t*| and |t| count as tied. */
const TIE_SLACK = 1e-9
/** Bisection stops when the bracket is this many SEs wide. */
const ROOT_TOL_SE = 1e-6
/** A bound is searched up to this many SEs from the estimate. */
const MAX_BRACKET_SE = 1000
/** Above this many draws the per-draw parts for inversion are not kept (5 numbers a draw). */
export const MAX_INTERVAL_DRAWS = 1_000_000
/** Draws per tallied chunk. */
const CHUNK = 4096

function checkModel(model: WildBootstrapModel): void {
  const n = model.y.length
  const G = model.nClusters
  if (!Number.isInteger(G) || G < 2) {
    throw new EngineError('single_cluster', `the wild cluster bootstrap needs at least two clusters, but the data have ${G}; use analytic or permutation inference, or add clusters`)
  }
  if (model.cluster.length !== n) throw new EngineError('invalid_input', `wild cluster bootstrap: ${model.cluster.length} cluster indices for ${n} rows`)
  for (const t of model.terms) {
    if (t.values.length !== n) throw new EngineError('invalid_input', `wild cluster bootstrap: term "${t.name}" has ${t.values.length} values for ${n} rows`)
  }
  if (!model.terms.some((t) => t.name === model.test)) {
    throw new EngineError('invalid_input', `wild cluster bootstrap: the tested term "${model.test}" is not in the model (terms: ${listSome(model.terms.map((t) => t.name), 10)})`)
  }
  const rows = new Int32Array(G)
  for (let i = 0; i < n; i++) {
    const g = model.cluster[i]
    if (!(g >= 0 && g < G)) throw new EngineError('invalid_input', `wild cluster bootstrap: row ${i} has cluster index ${g}, outside 0..${G - 1}`)
    rows[g]++
  }
  const empty = rows.findIndex((c) => c === 0)
  if (empty >= 0) throw new EngineError('invalid_input', `wild cluster bootstrap: cluster index ${empty} has no rows; pass dense indices 0..G-1 of the clusters present`)
}

/** Which closed form of M_D(ur o 1_g) applies. */
function choosePath(model: WildBootstrapModel, balanced: boolean): BootstrapPath {
  const absorb = model.absorb
  if (!absorb) return 'diagonal'
  const clusterOfUnit = new Int32Array(absorb.nUnits).fill(-1)
  let nested = true
  for (let i = 0; i < absorb.unit.length && nested; i++) {
    const u = absorb.unit[i]
    if (clusterOfUnit[u] === -1) clusterOfUnit[u] = model.cluster[i]
    else if (clusterOfUnit[u] !== model.cluster[i]) nested = false
  }
  if (!nested) return 'general'
  if (!absorb.period) return 'diagonal'
  return balanced ? 'two_way_balanced' : 'general'
}

/**
 * (X'X)^-1 by the Cholesky factorisation of the column-scaled cross-product, as ols.ts does
 * (the design is known to be of full rank: the fit succeeded).
 */
function inverseGram(X: Float64Array[]): Matrix {
  const k = X.length
  const norms = X.map((c) => Math.sqrt(dot(c, c)))
  const scaled = new Matrix(k, k)
  for (let r = 0; r < k; r++) {
    for (let c = r; c < k; c++) {
      const v = dot(X[r], X[c]) / (norms[r] * norms[c])
      scaled.set(r, c, v)
      scaled.set(c, r, v)
    }
  }
  const inv = new CholeskyDecomposition(scaled).solve(Matrix.eye(k))
  for (let r = 0; r < k; r++) for (let c = 0; c < k; c++) inv.set(r, c, inv.get(r, c) / (norms[r] * norms[c]))
  return inv
}

/**
 * The fit (regression.ts, for estimate and CR1 SE) and the per-cluster parts of the fast
 * algorithm: d and S as two parts affine in beta0. A caller that has already fitted this very
 * model with fitLinearModel and its cluster covariance may pass that fit to skip refitting.
 */
export function prepareWildBootstrap(model: WildBootstrapModel, fitted?: ModelFit): PreparedWildBootstrap {
  checkModel(model)
  const n = model.y.length
  const G = model.nClusters
  const { cluster } = model
  if (fitted && (fitted.nObs !== n || fitted.nClusters !== G || !fitted.names.includes(model.test))) {
    throw new EngineError('invalid_input', `wild cluster bootstrap: the fit passed in is not this model's clustered fit (rows, clusters or the term "${model.test}" differ); pass none to refit`)
  }
  const fit =
    fitted ??
    fitLinearModel({
      y: model.y,
      terms: model.terms,
      intercept: model.intercept,
      absorb: model.absorb,
      covariance: { kind: 'cluster', cluster, nClusters: G, smallSample: model.smallSample },
    })
  const j = fit.names.indexOf(model.test)
  const estimate = fit.beta[j]
  const se = Math.sqrt(fit.vcov.get(j, j))
  const K = fit.kSmallSample ?? fit.kFull
  const factor = clusterFactor(model.smallSample, { nObs: n, nClusters: G, kFull: fit.kFull, kNested: K, kSlopes: K })

  // within-transformed columns, the tested one first (the intercept among Z without effects)
  const absorber = model.absorb ? makeAbsorber(model.absorb) : null
  const tested = model.terms.find((t) => t.name === model.test)!
  const tilde = (v: Float64Array): Float64Array => (absorber ? absorber.demean(v) : v)
  const x = tilde(tested.values)
  const Z = model.terms.filter((t) => t !== tested).map((t) => tilde(t.values))
  if (!absorber && model.intercept) Z.unshift(new Float64Array(n).fill(1))
  const X = [x, ...Z]
  const k = X.length
  const bread = inverseGram(X)

  // ub = M_Z~ x~, a = ub / ub'ub; the restricted residuals are ur = ua - beta0 ub with
  // ua = M_Z~ y~ = u + estimate * ub (u: the full model's residuals, orthogonal to Z~)
  const ub = Z.length ? ols(x, Z, Z.map((_, i) => `column ${i + 1}`)).residuals : x
  const ubub = dot(ub, ub)
  const u = fit.residuals
  const uaAt = (i: number): number => u[i] + estimate * ub[i]

  // one pass: d, the cluster sums X_h' a_h and X_g' ur_g, and (two-way, balanced) the
  // cluster-by-period sums behind m_g(t)
  const path = choosePath(model, absorber?.balanced ?? true)
  const T = path === 'two_way_balanced' ? model.absorb!.nPeriods! : 0
  const period = model.absorb?.period
  const dA = new Float64Array(G)
  const dB = new Float64Array(G)
  const Ah = new Float64Array(G * k)
  const CA = new Float64Array(G * k)
  const CB = new Float64Array(G * k)
  const aSum = new Float64Array(G * T)
  const mA = new Float64Array(G * T)
  const mB = new Float64Array(G * T)
  for (let i = 0; i < n; i++) {
    const g = cluster[i]
    const ubi = ub[i]
    const uai = uaAt(i)
    const ai = ubi / ubub
    dA[g] += ai * uai
    dB[g] += ai * ubi
    const o = g * k
    for (let c = 0; c < k; c++) {
      const xi = X[c][i]
      Ah[o + c] += xi * ai
      CA[o + c] += xi * uai
      CB[o + c] += xi * ubi
    }
    if (T) {
      const q = g * T + period![i]
      aSum[q] += ai
      mA[q] += uai
      mB[q] += ubi
    }
  }

  // second part of S: (X_h' a_h)' B (X_g' ur_g)
  const BAh = new Float64Array(G * k)
  for (let h = 0; h < G; h++) {
    for (let r = 0; r < k; r++) {
      let acc = 0
      for (let c = 0; c < k; c++) acc += bread.get(r, c) * Ah[h * k + c]
      BAh[h * k + r] = acc
    }
  }
  const SA = new Float64Array(G * G)
  const SB = new Float64Array(G * G)
  for (let h = 0; h < G; h++) {
    for (let g = 0; g < G; g++) {
      let sa = 0
      let sb = 0
      for (let c = 0; c < k; c++) {
        sa += BAh[h * k + c] * CA[g * k + c]
        sb += BAh[h * k + c] * CB[g * k + c]
      }
      SA[h * G + g] = -sa
      SB[h * G + g] = -sb
    }
  }

  // first part of S: a_h' [M_D(ur o 1_g)]_h
  if (path === 'diagonal') {
    for (let g = 0; g < G; g++) {
      SA[g * G + g] += dA[g]
      SB[g * G + g] += dB[g]
    }
  } else if (path === 'two_way_balanced') {
    const U = model.absorb!.nUnits
    for (let h = 0; h < G; h++) {
      for (let g = 0; g < G; g++) {
        let sa = 0
        let sb = 0
        for (let t = 0; t < T; t++) {
          sa += aSum[h * T + t] * mA[g * T + t]
          sb += aSum[h * T + t] * mB[g * T + t]
        }
        SA[h * G + g] += (h === g ? dA[g] : 0) - sa / U
        SB[h * G + g] += (h === g ? dB[g] : 0) - sb / U
      }
    }
  } else {
    // F_hg = (a o 1_h)' M_D (ur o 1_g) = sum_{i in g} [M_D(a o 1_h)]_i ur_i
    const v = new Float64Array(n)
    for (let h = 0; h < G; h++) {
      for (let i = 0; i < n; i++) v[i] = cluster[i] === h ? ub[i] / ubub : 0
      const mv = absorber!.demean(v)
      for (let i = 0; i < n; i++) {
        const o = h * G + cluster[i]
        SA[o] += mv[i] * uaAt(i)
        SB[o] += mv[i] * ub[i]
      }
    }
  }
  return { estimate, se, factor, nObs: n, nClusters: G, dA, dB, SA, SB, path }
}

/** Counts of |t*| against |t| (ties within the relative slack count on both sides) and the first t* values. */
interface Tally {
  absGe: number
  ge: number
  le: number
  ties: number
  minRelGap: number
  first: number[]
}

/** Adds t* of draws from..from+count-1 (held in tStar[0..count-1]) to the tally. */
function tallyChunk(tally: Tally, t: number, keep: number, tStar: Float64Array, count: number, from: number): void {
  const absT = Math.abs(t)
  const thr = absT * (1 - TIE_SLACK)
  const slack = TIE_SLACK * absT
  const lo = t - slack
  const hi = t + slack
  let { absGe, ge, le, ties, minRelGap } = tally
  for (let j = 0; j < count; j++) {
    let v = tStar[j]
    if (v !== v) v = 0 // NaN (0/0: a draw whose scores all vanish) counts as t* = 0
    if (from + j < keep) tally.first.push(v)
    const abs = v < 0 ? -v : v
    if (abs >= thr) absGe++
    if (v >= lo) ge++
    if (v <= hi) le++
    const gap = abs > absT ? abs - absT : absT - abs
    if (gap <= slack) ties++
    else if (gap < minRelGap * absT) minRelGap = gap / absT
  }
  Object.assign(tally, { absGe, ge, le, ties, minRelGap })
}

/** Per-draw parts kept for test inversion: t*(beta) = (n0 - delta nB) / sqrt(c (q00 - 2 delta q0B + delta^2 qBB)), delta = beta - beta0. */
interface DrawParts {
  n0: Float64Array
  nB: Float64Array
  q00: Float64Array
  q0B: Float64Array
  qBB: Float64Array
}

function checkOptions(o: WildBootstrapOptions): void {
  if (!Number.isInteger(o.draws) || o.draws < 1) throw new EngineError('invalid_spec', `wild cluster bootstrap: draws must be a whole number of at least 1, got ${o.draws}`)
  if (o.weights !== 'rademacher' && o.weights !== 'webb') throw new EngineError('invalid_spec', `wild cluster bootstrap: weights must be "rademacher" or "webb", got "${String(o.weights)}"`)
  if (!Number.isInteger(o.seed) || o.seed < 0 || o.seed > 2 ** 32 - 1) throw new EngineError('invalid_spec', `wild cluster bootstrap: seed must be a whole number 0..4294967295, got ${o.seed}`)
  if (!(o.level > 0 && o.level < 1)) throw new EngineError('invalid_spec', `wild cluster bootstrap: level is a coverage between 0 and 1 such as 0.95, got ${o.level}`)
  if (o.nullValue !== undefined && !Number.isFinite(o.nullValue)) throw new EngineError('invalid_spec', `wild cluster bootstrap: nullValue must be a finite number, got ${o.nullValue}`)
  if (o.keep !== undefined && (!Number.isInteger(o.keep) || o.keep < 0)) throw new EngineError('invalid_spec', `wild cluster bootstrap: keep must be a whole number of at least 0, got ${o.keep}`)
}

/** The draws, the p-values at nullValue and the interval, from prepared parts. */
export function runWildBootstrap(prep: PreparedWildBootstrap, options: WildBootstrapOptions): WildBootstrapResult {
  checkOptions(options)
  const G = prep.nClusters
  const c = prep.factor
  const beta0 = options.nullValue ?? 0
  const t = (prep.estimate - beta0) / prep.se
  const values = options.weights === 'webb' ? WEBB : RADEMACHER
  const m = values.length
  const total = m ** G
  const enumerated = total <= options.draws
  const nDraws = enumerated ? total : options.draws
  const wantInterval = options.interval ?? true
  const keepParts = wantInterval && nDraws <= MAX_INTERVAL_DRAWS

  const S0 = new Float64Array(G * G)
  for (let i = 0; i < G * G; i++) S0[i] = prep.SA[i] - beta0 * prep.SB[i]
  const d0 = new Float64Array(G)
  for (let g = 0; g < G; g++) d0[g] = prep.dA[g] - beta0 * prep.dB[g]
  const { SB, dB } = prep

  const parts: DrawParts | null = keepParts
    ? { n0: new Float64Array(nDraws), nB: new Float64Array(nDraws), q00: new Float64Array(nDraws), q0B: new Float64Array(nDraws), qBB: new Float64Array(nDraws) }
    : null
  const keep = options.keep ?? 8
  const tally: Tally = { absGe: 0, ge: 0, le: 0, ties: 0, minRelGap: Infinity, first: [] }
  // t* are computed in chunks and tallied chunk by chunk
  const tStar = new Float64Array(CHUNK)
  let filled = 0
  let chunkStart = 0
  const flush = (): void => {
    tallyChunk(tally, t, keep, tStar, filled, chunkStart)
    chunkStart += filled
    filled = 0
  }

  if (enumerated) {
    // blocks of m draws share the digits of clusters 2..G: their part of S w is built once
    // per block, so a draw costs O(G)
    const digits = new Int32Array(G)
    const r0 = new Float64Array(G)
    const rB = new Float64Array(G)
    const col0 = new Float64Array(G)
    const colB = new Float64Array(G)
    for (let h = 0; h < G; h++) {
      col0[h] = S0[h * G]
      colB[h] = SB[h * G]
    }
    const wRest = new Float64Array(G)
    for (let b = 0; b < nDraws; ) {
      for (let g = 1; g < G; g++) wRest[g] = values[digits[g]]
      let n0r = 0
      let nBr = 0
      for (let g = 1; g < G; g++) {
        n0r += d0[g] * wRest[g]
        nBr += dB[g] * wRest[g]
      }
      for (let h = 0; h < G; h++) {
        const o = h * G
        let s = 0
        for (let g = 1; g < G; g++) s += S0[o + g] * wRest[g]
        r0[h] = s
      }
      if (parts) {
        for (let h = 0; h < G; h++) {
          const o = h * G
          let s = 0
          for (let g = 1; g < G; g++) s += SB[o + g] * wRest[g]
          rB[h] = s
        }
      }
      for (let v = 0; v < m; v++, b++) {
        const w = values[v]
        let q00 = 0
        for (let h = 0; h < G; h++) {
          const x = r0[h] + w * col0[h]
          q00 += x * x
        }
        const num0 = n0r + w * d0[0]
        tStar[filled++] = num0 / Math.sqrt(c * q00)
        if (parts) {
          let q0B = 0
          let qBB = 0
          for (let h = 0; h < G; h++) {
            const x = r0[h] + w * col0[h]
            const z = rB[h] + w * colB[h]
            q0B += x * z
            qBB += z * z
          }
          parts.n0[b] = num0
          parts.nB[b] = nBr + w * dB[0]
          parts.q00[b] = q00
          parts.q0B[b] = q0B
          parts.qBB[b] = qBB
        }
      }
      if (filled + m > CHUNK) flush()
      for (let g = 1; g < G; g++) {
        if (++digits[g] < m) break
        digits[g] = 0
      }
    }
  } else {
    const rng = seededRandom(options.seed)
    const w = new Float64Array(G)
    const G2 = G - (G % 2)
    const G4 = G - (G % 4)
    for (let b = 0; b < nDraws; b++) {
      if (b === 0) w.fill(1)
      else for (let g = 0; g < G; g++) w[g] = values[rng.int(m)]
      let num0 = 0
      let numB = 0
      for (let g = 0; g < G; g++) {
        num0 += w[g] * d0[g]
        numB += w[g] * dB[g]
      }
      // S w row by row, with independent partial sums (the loop is bound by add latency)
      let q00 = 0
      if (parts) {
        let q0B = 0
        let qBB = 0
        for (let h = 0; h < G; h++) {
          const o = h * G
          let s1 = 0
          let s2 = 0
          let z1 = 0
          let z2 = 0
          let g = 0
          for (; g < G2; g += 2) {
            const w1 = w[g]
            const w2 = w[g + 1]
            s1 += S0[o + g] * w1
            s2 += S0[o + g + 1] * w2
            z1 += SB[o + g] * w1
            z2 += SB[o + g + 1] * w2
          }
          if (g < G) {
            s1 += S0[o + g] * w[g]
            z1 += SB[o + g] * w[g]
          }
          const s = s1 + s2
          const z = z1 + z2
          q00 += s * s
          q0B += s * z
          qBB += z * z
        }
        parts.n0[b] = num0
        parts.nB[b] = numB
        parts.q00[b] = q00
        parts.q0B[b] = q0B
        parts.qBB[b] = qBB
      } else {
        for (let h = 0; h < G; h++) {
          const o = h * G
          let s1 = 0
          let s2 = 0
          let s3 = 0
          let s4 = 0
          let g = 0
          for (; g < G4; g += 4) {
            s1 += S0[o + g] * w[g]
            s2 += S0[o + g + 1] * w[g + 1]
            s3 += S0[o + g + 2] * w[g + 2]
            s4 += S0[o + g + 3] * w[g + 3]
          }
          for (; g < G; g++) s1 += S0[o + g] * w[g]
          const s = s1 + s2 + (s3 + s4)
          q00 += s * s
        }
      }
      tStar[filled++] = num0 / Math.sqrt(c * q00)
      if (filled === CHUNK) flush()
    }
  }
  flush()

  const p = tally.absGe / nDraws
  const pEqualTailed = Math.min(1, (2 * Math.min(tally.ge, tally.le)) / nDraws)

  let ciLow: number | null = null
  let ciHigh: number | null = null
  let ciReason: string | null = null
  if (!wantInterval) ciReason = 'no interval was asked for'
  else if (!parts) ciReason = `no interval: inverting the test keeps every draw, which is limited to ${MAX_INTERVAL_DRAWS.toLocaleString('en')} draws (${nDraws.toLocaleString('en')} here); use fewer draws`
  else if (!(prep.se > 0) || !Number.isFinite(prep.se)) ciReason = 'no interval: the standard error is zero'
  else {
    const ci = invert(prep, parts, beta0, options.level, nDraws)
    ciLow = ci.low
    ciHigh = ci.high
    ciReason = ci.reason
  }

  return {
    estimate: prep.estimate,
    se: prep.se,
    t,
    nullValue: beta0,
    p,
    pEqualTailed,
    level: options.level,
    ciLow,
    ciHigh,
    ciReason,
    draws: nDraws,
    enumerated,
    weights: options.weights,
    nClusters: G,
    counts: { absGe: tally.absGe, ge: tally.ge, le: tally.le, ties: tally.ties },
    minRelGap: Number.isFinite(tally.minRelGap) ? tally.minRelGap : null,
    firstDraws: tally.first,
    path: prep.path,
  }
}

/** The symmetric p at beta from the kept per-draw parts (same draws as at beta0). */
function pFromParts(prep: PreparedWildBootstrap, parts: DrawParts, beta0: number, beta: number): number {
  const delta = beta - beta0
  const thr = Math.abs((prep.estimate - beta) / prep.se) * (1 - TIE_SLACK)
  const c = prep.factor
  const { n0, nB, q00, q0B, qBB } = parts
  const B = n0.length
  let count = 0
  for (let b = 0; b < B; b++) {
    const num = n0[b] - delta * nB[b]
    const q = q00[b] - 2 * delta * q0B[b] + delta * delta * qBB[b]
    const tStar = num / Math.sqrt(c * Math.max(q, 0))
    if ((Number.isNaN(tStar) ? 0 : Math.abs(tStar)) >= thr) count++
  }
  return count / B
}

/** Test inversion: each bound by bracketing from the analytic half-width, then bisection. */
function invert(prep: PreparedWildBootstrap, parts: DrawParts, beta0: number, level: number, nDraws: number): { low: number | null; high: number | null; reason: string | null } {
  const alpha = 1 - level
  const { estimate, se } = prep
  const kept = (beta: number): boolean => pFromParts(prep, parts, beta0, beta) > alpha
  const q = tQuantileAt(1 - alpha / 2, prep.nClusters - 1)
  const first = Number.isFinite(q) && q > 0 ? q * se : se
  const limit = MAX_BRACKET_SE * se
  const tol = ROOT_TOL_SE * se
  const bound = (side: 1 | -1): number | null => {
    // bracket: the first step out from the estimate that is rejected
    let inside = 0
    let outside = Infinity
    for (let step = Math.min(first, limit); ; step = Math.min(2 * step, limit)) {
      if (!kept(estimate + side * step)) {
        outside = step
        break
      }
      inside = step
      if (step >= limit) break
    }
    if (outside === Infinity) return null
    while (outside - inside > tol) {
      const mid: number = (inside + outside) / 2
      if (kept(estimate + side * mid)) inside = mid
      else outside = mid
    }
    return estimate + side * ((inside + outside) / 2)
  }
  const low = bound(-1)
  const high = bound(1)
  let reason: string | null = null
  if (low === null || high === null) {
    const which = low === null && high === null ? 'either side' : low === null ? 'the lower side' : 'the upper side'
    const floor = 1 / nDraws
    const why = floor > alpha ? ` (with ${nDraws} draws no p-value can fall below ${floor.toPrecision(3)}, above 1 - level = ${alpha.toPrecision(3)})` : ''
    reason = `no bound on ${which}: the bootstrap rejects no value within ${MAX_BRACKET_SE.toLocaleString('en')} standard errors of the estimate at level ${level}${why}; report the p-value, or use more clusters or another method`
  }
  return { low, high, reason }
}

/** The restricted wild cluster bootstrap-t: fit, draws, p at nullValue and the interval. */
export function wildClusterBootstrap(model: WildBootstrapModel, options: WildBootstrapOptions): WildBootstrapResult {
  checkOptions(options)
  return runWildBootstrap(prepareWildBootstrap(model), options)
}
