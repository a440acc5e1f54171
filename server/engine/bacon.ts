/**
 * Goodman-Bacon (2021, "Difference-in-differences with variation in treatment timing",
 * J. Econometrics 225(2)) decomposition of the two-way fixed-effects estimate
 *
 *   y_it = a_i + g_t + beta D_it + e_it,   D_it = 1[t >= t*_i] (absorbing, binary)
 *
 * on a balanced panel of N units and T periods into every 2x2 difference-in-differences
 * between timing groups, with weights that sum to 1 (Theorem 1). Timing groups: the units
 * sharing a first treated period t*_k; U = the never treated (no start, or a start after the
 * last period); a group treated from the first period on is "always treated" (Dbar = 1) and
 * serves only as an already-treated comparison. With n_k = N_k / N, Dbar_k = #{t >= t*_k} / T
 * and V_D = (1/NT) sum_it Dtilde_it^2 (Dtilde = D after removing unit and period means):
 *
 *   treated_vs_never (k against U): pre t < t*_k, post t >= t*_k,
 *     s_kU = (n_k + n_U)^2 n_kU (1 - n_kU) Dbar_k (1 - Dbar_k) / V_D,  n_kU = n_k/(n_k + n_U)
 *   earlier_vs_later (k early against l late, before l starts): periods t < t*_l,
 *     pre t < t*_k, post t*_k <= t < t*_l,
 *     s^k_kl = ((n_k + n_l)(1 - Dbar_l))^2 n_kl (1 - n_kl) [(Dbar_k - Dbar_l)/(1 - Dbar_l)]
 *              [(1 - Dbar_k)/(1 - Dbar_l)] / V_D,  n_kl = n_k/(n_k + n_l)
 *   later_vs_earlier (l late against the already-treated k): periods t >= t*_k,
 *     pre t*_k <= t < t*_l, post t >= t*_l,
 *     s^l_kl = ((n_k + n_l) Dbar_k)^2 n_kl (1 - n_kl) [Dbar_l/Dbar_k] [(Dbar_k - Dbar_l)/Dbar_k] / V_D
 *
 * (eq. 10a-c). Each 2x2 estimate is a difference of the groups' period means:
 * [mean_post ybar_a - mean_pre ybar_a] - [mean_post ybar_b - mean_pre ybar_b]. The weighted
 * sum of the 2x2 estimates equals the two-way estimate, returned as `twfe`
 * (sum Dtilde y / sum Dtilde^2). Comparisons with no weight (an always-treated group
 * against the never treated) are not listed.
 *
 * Throws EngineError 'invalid_input' (an unbalanced panel, arrays that do not match, a
 * non-finite outcome) and 'singular_design' (no variation in the treatment after removing
 * unit and period effects).
 */
import type { DecompositionRow } from '../../shared/engine/result'
import { EngineError } from './errors'

export interface BaconInput {
  y: Float64Array
  /** Dense unit index per row, 0..nUnits-1. */
  unit: Int32Array
  nUnits: number
  /** Dense period index per row, 0..nPeriods-1, in time order. */
  period: Int32Array
  nPeriods: number
  /** Per unit: dense period index of adoption (first treated period); NaN for never treated. */
  start: Float64Array
  /** Text of a timing group from its dense start index (default: the index). */
  label?: (periodIndex: number) => string
}

export interface BaconGroup {
  /** Dense start index; 0 = always treated, nPeriods = never treated. */
  start: number
  nUnits: number
  share: number
  /** Share of the periods in which the group is treated. */
  dbar: number
}

export interface BaconResult {
  rows: DecompositionRow[]
  twfe: number
  /** V_D: mean square of the two-way demeaned treatment. */
  varianceD: number
  groups: BaconGroup[]
}

/** Dense start index on a period list: the first period at or after `startOrdinal` (nPeriods if none; NaN stays NaN). */
export function denseStart(periodOrdinals: ArrayLike<number>, startOrdinal: number): number {
  if (Number.isNaN(startOrdinal)) return NaN
  for (let t = 0; t < periodOrdinals.length; t++) if (periodOrdinals[t] >= startOrdinal) return t
  return periodOrdinals.length
}

export function baconDecomposition(input: BaconInput): BaconResult {
  const { y, unit, period, nUnits: N, nPeriods: T, start } = input
  const label = input.label ?? ((k: number) => String(k))
  const n = y.length
  if (unit.length !== n || period.length !== n || start.length !== N) {
    throw new EngineError('invalid_input', `decomposition: y, unit and period must have one entry per row (${n}, ${unit.length}, ${period.length}) and start one per unit (${N}, got ${start.length})`)
  }
  if (n !== N * T) {
    throw new EngineError('invalid_input', `the two-way decomposition needs a balanced panel (every unit in every period): ${N} units x ${T} periods = ${N * T} cells, but ${n} rows`)
  }
  const Y = new Float64Array(N * T).fill(NaN)
  for (let i = 0; i < n; i++) {
    const u = unit[i]
    const t = period[i]
    if (!(u >= 0 && u < N && t >= 0 && t < T)) throw new EngineError('invalid_input', `decomposition: row ${i} has unit ${u} or period ${t} out of range`)
    if (!Number.isFinite(y[i])) throw new EngineError('invalid_input', `decomposition: row ${i} has a missing or non-finite outcome; the decomposition needs a balanced panel`)
    if (!Number.isNaN(Y[u * T + t])) throw new EngineError('invalid_input', `the two-way decomposition needs a balanced panel: unit ${u} appears twice in period ${t}`)
    Y[u * T + t] = y[i]
  }

  // timing groups by start index: 0 always treated, 1..T-1 timing groups, T never treated
  const groupStart = new Int32Array(N)
  for (let u = 0; u < N; u++) {
    const s = start[u]
    groupStart[u] = Number.isNaN(s) || s >= T ? T : s <= 0 ? 0 : Math.ceil(s)
  }
  const distinct = [...new Set(groupStart)].sort((a, b) => a - b)
  const gIndex = new Map(distinct.map((s, k) => [s, k]))
  const G = distinct.length
  const count = new Float64Array(G)
  const mean = new Float64Array(G * T)
  for (let u = 0; u < N; u++) {
    const k = gIndex.get(groupStart[u])!
    count[k]++
    for (let t = 0; t < T; t++) mean[k * T + t] += Y[u * T + t]
  }
  for (let k = 0; k < G; k++) for (let t = 0; t < T; t++) mean[k * T + t] /= count[k]
  const groups: BaconGroup[] = distinct.map((s, k) => ({ start: s, nUnits: count[k], share: count[k] / N, dbar: (T - s) / T }))

  // two-way demeaned treatment: Dtilde_it = D_it - Dbar_i - Dbar_t + Dbar (balanced panel)
  const dbarT = new Float64Array(T)
  let dbarAll = 0
  for (const g of groups) {
    dbarAll += g.share * g.dbar
    for (let t = g.start; t < T; t++) dbarT[t] += g.share
  }
  let sdd = 0
  let sdy = 0
  for (let u = 0; u < N; u++) {
    const s = groupStart[u]
    const di = (T - s) / T
    for (let t = 0; t < T; t++) {
      const d = (t >= s ? 1 : 0) - di - dbarT[t] + dbarAll
      sdd += d * d
      sdy += d * Y[u * T + t]
    }
  }
  const varianceD = sdd / (N * T)
  if (!(varianceD > 1e-12)) {
    throw new EngineError('singular_design', 'the treatment does not vary once unit and period effects are removed (every unit adopts at the same time with no comparison units, or no unit adopts within the panel): there is nothing to decompose')
  }
  const twfe = sdy / sdd

  /** DiD of group a against group b, periods [from, to), post from `cut` on. */
  const did = (a: number, b: number, from: number, cut: number, to: number): number => {
    let preA = 0
    let preB = 0
    let postA = 0
    let postB = 0
    for (let t = from; t < cut; t++) {
      preA += mean[a * T + t]
      preB += mean[b * T + t]
    }
    for (let t = cut; t < to; t++) {
      postA += mean[a * T + t]
      postB += mean[b * T + t]
    }
    const nPre = cut - from
    const nPost = to - cut
    return postA / nPost - preA / nPre - (postB / nPost - preB / nPre)
  }

  const rows: DecompositionRow[] = []
  const never = gIndex.get(T)
  const timing = distinct.map((s, k) => k).filter((k) => distinct[k] > 0 && distinct[k] < T)
  const always = gIndex.get(0)
  if (never !== undefined) {
    const nU = groups[never].share
    for (const k of timing) {
      const { share: nk, dbar: Dk, start: sk } = groups[k]
      const nkU = nk / (nk + nU)
      const w = ((nk + nU) ** 2 * nkU * (1 - nkU) * Dk * (1 - Dk)) / varianceD
      rows.push({ type: 'treated_vs_never', treated: label(sk), control: 'never', estimate: did(k, never, 0, sk, T), weight: w })
    }
  }
  // pairs of groups in start order; the always-treated group only as an already-treated control
  const ordered = always !== undefined ? [always, ...timing] : timing
  for (let a = 0; a < ordered.length; a++) {
    for (let b = a + 1; b < ordered.length; b++) {
      const k = ordered[a]
      const l = ordered[b]
      const { share: nk, dbar: Dk, start: sk } = groups[k]
      const { share: nl, dbar: Dl, start: sl } = groups[l]
      const nkl = nk / (nk + nl)
      if (sk > 0) {
        const w = (((nk + nl) * (1 - Dl)) ** 2 * nkl * (1 - nkl) * ((Dk - Dl) / (1 - Dl)) * ((1 - Dk) / (1 - Dl))) / varianceD
        rows.push({ type: 'earlier_vs_later', treated: label(sk), control: label(sl), estimate: did(k, l, 0, sk, sl), weight: w })
      }
      const w = (((nk + nl) * Dk) ** 2 * nkl * (1 - nkl) * (Dl / Dk) * ((Dk - Dl) / Dk)) / varianceD
      rows.push({ type: 'later_vs_earlier', treated: label(sl), control: label(sk), estimate: did(l, k, sk, sl, T), weight: w })
    }
  }
  return { rows, twfe, varianceD, groups }
}

/**
 * A plain-words warning when comparisons against already-treated units carry weight in the
 * two-way estimate (they can pull it away from, even past zero from, every group's own effect
 * when effects change over time), or null when they carry none.
 */
export function alreadyTreatedWarning(rows: readonly DecompositionRow[]): string | null {
  let w = 0
  let s = 0
  let n = 0
  for (const r of rows) {
    if (r.type === 'later_vs_earlier' && r.weight > 0) {
      w += r.weight
      s += r.weight * r.estimate
      n++
    }
  }
  if (!(w > 1e-12)) return null
  const pct = w * 100 < 0.1 ? '<0.1' : (w * 100).toFixed(1)
  return `${pct}% of the two-way estimate's weight comes from ${n} comparison${n > 1 ? 's' : ''} that use already-treated units as the comparison group (their weighted estimate: ${(s / w).toPrecision(4)}); when effects grow or fade over time these comparisons can bias the estimate, even flip its sign; the group-time effects of design "staggered" avoid them`
}
