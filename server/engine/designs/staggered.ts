/**
 * Staggered adoption: group-time average treatment effects (Callaway and Sant'Anna 2021,
 * "Difference-in-differences with multiple time periods", J. Econometrics 225(2)),
 * without covariates (unconditional parallel trends), with the universal base period.
 *
 * Cohort g = the units first treated in period g (spec.start, a map unit -> period, or one
 * period for all); units absent from spec.treated never adopt. For every cohort g and every
 * period t (before and after g), with the base period b = g - 1 and dY_i = y_it - y_ib:
 *
 *   ATT(g, t) = mean_{i in g} dY_i - mean_{i in C(g,t)} dY_i
 *
 * C(g, t), the comparison units of the cell (spec.staggered.comparison):
 *   "never" (default)  the never-treated pool: spec.comparison, or every unit not in treated;
 *   "not_yet"          that pool plus the units of the other cohorts not yet treated at t nor
 *                      at b: {h != g : h > max(t, g - 1)}.
 * ATT(g, g-1) = 0 by construction (reported with se 0). With "not_yet" and no never-treated
 * units the last cohort has no comparison units at its base period: it gets no effects (warned)
 * but its units still compare for the earlier cohorts, whose cells from its start on have no
 * comparison units and are left out (warned). A unit enters a cell only when it has
 * a value at both t and b, so a unit missing some periods drops out of the cells that need
 * them and stays in the others (warned, naming the units).
 *
 * Influence functions (unit sampling, comparison sets taken as fixed): for i in g,
 * psi_i = (dY_i - mean_g dY)/n_g; for i in C, psi_i = -(dY_i - mean_C dY)/n_C; else 0, with
 * n_g, n_C the units in the cell; se(g,t) = sqrt(sum_i psi_i^2) (divides by n, not n - 1).
 *
 * Aggregates with the weights held fixed (no weight-estimation term), N_g = units of cohort g:
 *   overall      sum over post cells (t >= g) of N_g ATT(g,t) / sum of N_g over those cells
 *   byRelTime    theta(e) = sum_g N_g ATT(g, g+e) / sum_g N_g over the cohorts with that cell,
 *                e = t - g in periods, negative e included (theta(-1) = 0)
 *   byCohort     theta_g = the equal-weight mean of the cohort's post cells
 *   overallByCohort  sum_g N_g theta_g / sum_g N_g (returned by groupTimeEffects only)
 * The se of an aggregate sum_k a_k ATT_k is sqrt(sum_i (sum_k a_k psi_ik)^2): each unit's
 * influence summed over cells before squaring.
 *
 * Simultaneous bands for byRelTime (as Callaway and Sant'Anna 2021 propose): the multiplier
 * bootstrap with Rademacher multipliers v_i on the influence functions, t*_e = sum_i v_i
 * psi_ie / se_e, critical value c = the `level` quantile of max_e |t*_e| (sup-t), bands
 * theta(e) -+ c se(e). The SEs in the bands are the analytic ones.
 *
 * The headline effect is `overall` (term "att_overall") with a normal reference: df null,
 * p = 2 Phi(-|t|), bounds estimate -+ z se with z the (1 + level)/2 normal quantile.
 * Warnings: pre-period effects outside the simultaneous band (parallel trends in doubt),
 * fewer than 10 treated units (common practice threshold), unbalanced panels, cells or
 * cohorts left out.
 *
 * Throws EngineError 'invalid_spec' (covariates, a treatment column, a window, resampling
 * inference, no never-treated units for "never", a cohort with no comparison units at its
 * base period under "never", no cohort with any under "not_yet"), 'unknown_unit' (start or
 * treated naming units not in the panel), 'no_pre_periods' (a cohort whose base period is not in the panel, e.g. one that starts in
 * the panel's first period), 'no_post_periods' (no post cell can be estimated), and what
 * sample.ts throws.
 */
import normalCdf from '@stdlib/stats-base-dists-normal-cdf'
import type { EstimateResult, GroupTimeCell, InferenceResult, StaggeredResult } from '../../../shared/engine/result'
import type { Spec } from '../../../shared/engine/spec'
import { pTwoSidedNormal, tQuantileAt } from '../distributions'
import { EngineError, listSome } from '../errors'
import { type Panel, periodLabel, unitIndices } from '../panel'
import { seededRandom } from '../random'
import { resolveRoles, selectSample } from '../sample'

export type StaggeredComparison = 'never' | 'not_yet'

export interface GroupTimeInput {
  /** Outcome, unit-major: y[u * nPeriods + t]; NaN where the unit has no value. */
  y: Float64Array
  nUnits: number
  nPeriods: number
  /** Ordinal of each period, strictly increasing; consecutive periods differ by 1 (gaps allowed: cohort g needs the period g - 1). */
  periodOrdinals: Float64Array
  /** Per unit: ordinal of its first treated period, NaN for a never-treated comparison unit. */
  start: Float64Array
  comparison: StaggeredComparison
  /** Text of a period ordinal for messages (default: the number). */
  label?: (ordinal: number) => string
}

export interface Cohort {
  /** Ordinal of the first treated period. */
  start: number
  /** Dense index of the base period start - 1. */
  base: number
  /** Units in the cohort (N_g, the aggregation weight). */
  size: number
}

export interface CellEstimate {
  /** Index into `cohorts`. */
  cohort: number
  /** Dense period index. */
  period: number
  relTime: number
  att: number
  se: number
  nCohort: number
  nComparison: number
  post: boolean
}

export interface Aggregate {
  estimate: number
  se: number
}

export interface GroupTimeEffects {
  cohorts: Cohort[]
  cells: CellEstimate[]
  overall: Aggregate
  byRelTime: (Aggregate & { relTime: number; nCohorts: number })[]
  byCohort: (Aggregate & { cohort: number; nPost: number })[]
  overallByCohort: Aggregate
  /** Influence functions of byRelTime, one column per entry: [k * nUnits + u]. */
  relTimeInfluence: Float64Array
  /** Units (input indices) that lack a value in some period. */
  incompleteUnits: number[]
}

const byNumber = (a: number, b: number) => a - b

/** Group-time effects, their influence-function SEs and the fixed-weight aggregates. */
export function groupTimeEffects(input: GroupTimeInput, warnings: string[] = []): GroupTimeEffects {
  const { y, nUnits: N, nPeriods: T, periodOrdinals: ord, start, comparison } = input
  const label = input.label ?? ((o: number) => String(o))
  if (y.length !== N * T || start.length !== N || ord.length !== T) {
    throw new EngineError('invalid_input', `group-time effects: y must hold nUnits x nPeriods = ${N * T} values (got ${y.length}), start ${N} (got ${start.length}), periodOrdinals ${T} (got ${ord.length})`)
  }
  const periodIndex = new Map<number, number>()
  ord.forEach((o, t) => periodIndex.set(o, t))
  // period-major copy: the units of one period sit together
  const yT = new Float64Array(N * T)
  for (let u = 0; u < N; u++) for (let t = 0; t < T; t++) yT[t * N + u] = y[u * T + t]

  // classes: one per distinct start (ascending), plus the never-treated pool
  const starts = [...new Set(Array.from(start).filter((s) => !Number.isNaN(s)))].sort(byNumber)
  const never: number[] = []
  const members: number[][] = starts.map(() => [])
  const classIndex = new Map(starts.map((s, k) => [s, k]))
  for (let u = 0; u < N; u++) {
    if (Number.isNaN(start[u])) {
      never.push(u)
    } else {
      members[classIndex.get(start[u])!].push(u)
    }
  }
  if (comparison === 'never' && never.length === 0) {
    throw new EngineError('invalid_spec', 'staggered comparison "never" needs never-treated units, but every unit in the sample is treated; use staggered.comparison "not_yet", or add never-treated units (spec.comparison)')
  }
  const neverUnits = Int32Array.from(never)
  const classUnits = members.map((m) => Int32Array.from(m))

  const dT = new Float64Array(N)
  const idT = new Int32Array(N)
  const dC = new Float64Array(N)
  const idC = new Int32Array(N)

  /** Appends the units of `list` observed at t and b to (ids, d) from position n; returns the new count. */
  const collect = (list: Int32Array, t: number, b: number, ids: Int32Array, d: Float64Array, n: number): number => {
    const rowT = t * N
    const rowB = b * N
    for (let j = 0; j < list.length; j++) {
      const u = list[j]
      const v = yT[rowT + u] - yT[rowB + u]
      if (v === v) {
        ids[n] = u
        d[n++] = v
      }
    }
    return n
  }
  /** The comparison units of cell (class k starting at g, period t, base b) into (idC, dC): the never pool, plus (not_yet) the other classes starting after max(t, g-1). */
  const collectComparison = (k: number, g: number, t: number, b: number): number => {
    let nC = collect(neverUnits, t, b, idC, dC, 0)
    if (comparison === 'not_yet') {
      const threshold = Math.max(ord[t], g - 1)
      for (let h = starts.length - 1; h >= 0 && starts[h] > threshold; h--) if (h !== k) nC = collect(classUnits[h], t, b, idC, dC, nC)
    }
    return nC
  }

  // cohorts with cells: a base period in the panel, with cohort and comparison units there;
  // later starts only serve as not-yet comparisons
  const cohortClass: number[] = []
  const cohorts: Cohort[] = []
  const late: string[] = []
  const unmatched: string[] = []
  starts.forEach((g, k) => {
    const n = classUnits[k].length
    if (g > ord[T - 1]) {
      late.push(`${label(g)} (${n} unit${n > 1 ? 's' : ''})`)
      return
    }
    if (g - 1 < ord[0]) {
      throw new EngineError('no_pre_periods', `no pre-periods: the cohort first treated in ${label(g)} (${n} unit${n > 1 ? 's' : ''}) starts in the panel's first period, so it has no base period ${label(g - 1)}; drop those units or add earlier periods`)
    }
    const base = periodIndex.get(g - 1)
    if (base === undefined) {
      throw new EngineError('no_pre_periods', `no pre-periods: the base period ${label(g - 1)} of the cohort first treated in ${label(g)} is not in the panel (no unit has a row there)`)
    }
    if (collect(classUnits[k], base, base, idT, dT, 0) === 0) {
      throw new EngineError('no_pre_periods', `no pre-periods: no unit of the cohort first treated in ${label(g)} has a value in its base period ${label(g - 1)}`)
    }
    if (collectComparison(k, g, base, base) === 0) {
      if (comparison === 'never') {
        throw new EngineError('invalid_spec', `the cohort first treated in ${label(g)} has no comparison units at its base period ${label(g - 1)}; add never-treated units or use staggered.comparison "not_yet"`)
      }
      unmatched.push(label(g))
      return
    }
    cohortClass.push(k)
    cohorts.push({ start: g, base, size: n })
  })
  if (late.length) {
    warnings.push(
      `treated units first treated after the last period (${late.join(', ')}) have no post-period: ${comparison === 'not_yet' ? 'they serve only as not-yet-treated comparisons' : 'they are left out (comparison "never")'}`,
    )
  }
  if (unmatched.length) {
    if (!cohorts.length) {
      throw new EngineError('invalid_spec', `no cohort has comparison units at its base period (no never-treated unit and no unit first treated later has a value there); add never-treated units`)
    }
    warnings.push(
      `the cohort${unmatched.length > 1 ? 's' : ''} first treated in ${unmatched.join(', ')} ha${unmatched.length > 1 ? 've' : 's'} no comparison units at ${unmatched.length > 1 ? 'their' : 'its'} base period (no never-treated unit and no unit adopts later): no effect is estimated for ${unmatched.length > 1 ? 'them' : 'it'}, but ${unmatched.length > 1 ? 'their' : 'its'} units still serve as not-yet-treated comparisons for earlier cohorts`,
    )
  }
  if (!cohorts.length) throw new EngineError('no_post_periods', 'no post-periods: every treated unit starts after the last period of the panel')

  const incompleteUnits: number[] = []
  for (let u = 0; u < N; u++) {
    for (let t = 0; t < T; t++) {
      if (Number.isNaN(y[u * T + t])) {
        incompleteUnits.push(u)
        break
      }
    }
  }

  // relative times present, dense
  let minRel = Infinity
  let maxRel = -Infinity
  for (const c of cohorts) {
    minRel = Math.min(minRel, ord[0] - c.start)
    maxRel = Math.max(maxRel, ord[T - 1] - c.start)
  }
  const relSlot = new Int32Array(maxRel - minRel + 1).fill(-1)
  for (const c of cohorts) for (let t = 0; t < T; t++) relSlot[ord[t] - c.start - minRel] = 0
  const relTimes: number[] = []
  for (let r = 0; r < relSlot.length; r++) if (relSlot[r] === 0) relSlot[r] = relTimes.push(r + minRel) - 1
  const E = relTimes.length
  const K = cohorts.length

  // influence of each relative time, period-major while accumulating: [e * N + u]
  const psiRel = new Float64Array(E * N)
  const relWeight = new Float64Array(E)
  const relCohorts = new Int32Array(E)
  const relSum = new Float64Array(E)
  let overallWeight = 0
  let overallSum = 0
  const psiCohort = new Float64Array(K * N)
  const cohortPost = new Int32Array(K)
  const cohortSum = new Float64Array(K)

  const cells: CellEstimate[] = []
  const skipped: string[] = []

  // per class (the starts, then the never-treated pool) and period: sum of y and whether
  // every unit of the class has a value; cells whose groups are complete at t and b take
  // their means from these sums and need a single pass over the units
  const S = starts.length
  const lists = [...classUnits, neverUnits]
  const sumY = new Float64Array((S + 1) * T)
  const full = new Uint8Array((S + 1) * T)
  for (let h = 0; h <= S; h++) {
    const list = lists[h]
    for (let t = 0; t < T; t++) {
      let sy = 0
      let seen = 0
      for (let j = 0; j < list.length; j++) {
        const v = yT[t * N + list[j]]
        if (v === v) {
          sy += v
          seen++
        }
      }
      sumY[h * T + t] = sy
      full[h * T + t] = seen === list.length ? 1 : 0
    }
  }
  const compClasses = new Int32Array(S + 1)

  /** Sum of squared deviations of dY from m over `list`, adding w dev (and, post, wc dev) to the influence rows. */
  const listPass = (list: Int32Array, t: number, b: number, m: number, w: number, wc: number, post: boolean, relRow: number, cohortRow: number): number => {
    const rowT = t * N
    const rowB = b * N
    let ss = 0
    if (post) {
      for (let j = 0; j < list.length; j++) {
        const u = list[j]
        const dev = yT[rowT + u] - yT[rowB + u] - m
        ss += dev * dev
        psiRel[relRow + u] += w * dev
        psiCohort[cohortRow + u] += wc * dev
      }
    } else {
      for (let j = 0; j < list.length; j++) {
        const u = list[j]
        const dev = yT[rowT + u] - yT[rowB + u] - m
        ss += dev * dev
        psiRel[relRow + u] += w * dev
      }
    }
    return ss
  }
  /** The same over collected units (ids, d) of count n. */
  const scratchPass = (ids: Int32Array, d: Float64Array, n: number, m: number, w: number, wc: number, post: boolean, relRow: number, cohortRow: number): number => {
    let ss = 0
    for (let j = 0; j < n; j++) {
      const dev = d[j] - m
      ss += dev * dev
      psiRel[relRow + ids[j]] += w * dev
      if (post) psiCohort[cohortRow + ids[j]] += wc * dev
    }
    return ss
  }

  for (let c = 0; c < K; c++) {
    const { start: g, base: b, size } = cohorts[c]
    const k = cohortClass[c]
    for (let t = 0; t < T; t++) {
      const rel = ord[t] - g
      const e = relSlot[rel - minRel]
      const post = ord[t] >= g
      // comparison classes: the never pool, plus (not_yet) the other classes starting after max(t, g-1)
      let nComp = 0
      compClasses[nComp++] = S
      if (comparison === 'not_yet') {
        const threshold = Math.max(ord[t], g - 1)
        for (let h = S - 1; h >= 0 && starts[h] > threshold; h--) if (h !== k) compClasses[nComp++] = h
      }
      let complete = full[k * T + t] === 1 && full[k * T + b] === 1
      let nC = 0
      let sumC = 0
      for (let q = 0; q < nComp; q++) {
        const h = compClasses[q]
        nC += lists[h].length
        sumC += sumY[h * T + t] - sumY[h * T + b]
        complete = complete && full[h * T + t] === 1 && full[h * T + b] === 1
      }
      let nT = classUnits[k].length
      if (!complete) {
        nC = collectComparison(k, g, t, b)
        nT = collect(classUnits[k], t, b, idT, dT, 0)
      }
      if (t === b) {
        cells.push({ cohort: c, period: t, relTime: rel, att: 0, se: 0, nCohort: nT, nComparison: nC, post: false })
        relCohorts[e]++
        relWeight[e] += size
        continue
      }
      if (nT === 0 || nC === 0) {
        skipped.push(`${label(g)}/${label(ord[t])}`)
        continue
      }
      // one pass per group: squared deviations for the se, and the influence functions,
      // accumulated with unnormalised weights (normalised below); `overall` is derived from
      // the relative times e >= 0 at the end (its post cells are exactly theirs)
      const relRow = e * N
      const cohortRow = c * N
      let mT: number
      let mC: number
      let ssT = 0
      let ssC = 0
      if (complete) {
        mT = (sumY[k * T + t] - sumY[k * T + b]) / nT
        mC = sumC / nC
        ssT = listPass(classUnits[k], t, b, mT, size / nT, 1 / nT, post, relRow, cohortRow)
        for (let q = 0; q < nComp; q++) ssC += listPass(lists[compClasses[q]], t, b, mC, -size / nC, -1 / nC, post, relRow, cohortRow)
      } else {
        mT = 0
        for (let j = 0; j < nT; j++) mT += dT[j]
        mT /= nT
        mC = 0
        for (let j = 0; j < nC; j++) mC += dC[j]
        mC /= nC
        ssT = scratchPass(idT, dT, nT, mT, size / nT, 1 / nT, post, relRow, cohortRow)
        ssC = scratchPass(idC, dC, nC, mC, -size / nC, -1 / nC, post, relRow, cohortRow)
      }
      const att = mT - mC
      cells.push({ cohort: c, period: t, relTime: rel, att, se: Math.sqrt(ssT / (nT * nT) + ssC / (nC * nC)), nCohort: nT, nComparison: nC, post })
      relCohorts[e]++
      relWeight[e] += size
      relSum[e] += size * att
      if (post) {
        overallWeight += size
        overallSum += size * att
        cohortPost[c]++
        cohortSum[c] += att
      }
    }
  }
  if (skipped.length) {
    warnings.push(
      `${skipped.length} group-time cell${skipped.length > 1 ? 's' : ''} (cohort/period) could not be estimated for lack of cohort or comparison units with values in both the period and the base period, and ${skipped.length > 1 ? 'are' : 'is'} left out: ${listSome(skipped, 6)}`,
    )
  }
  if (overallWeight === 0) throw new EngineError('no_post_periods', 'no post-periods: no group-time cell on or after a cohort\'s first treated period could be estimated')

  const seOf = (v: Float64Array, from: number, n: number, scale: number): number => {
    let s = 0
    for (let i = from; i < from + n; i++) s += v[i] * v[i]
    return Math.sqrt(s) * Math.abs(scale)
  }
  const psiOverall = new Float64Array(N)
  for (let e = 0; e < E; e++) {
    if (relTimes[e] < 0) continue
    const row = e * N
    for (let u = 0; u < N; u++) psiOverall[u] += psiRel[row + u]
  }
  const overall = { estimate: overallSum / overallWeight, se: seOf(psiOverall, 0, N, 1 / overallWeight) }

  const byCohort: GroupTimeEffects['byCohort'] = []
  const psiMix = new Float64Array(N)
  let mixWeight = 0
  let mixSum = 0
  for (let c = 0; c < K; c++) {
    if (!cohortPost[c]) {
      warnings.push(`the cohort first treated in ${label(cohorts[c].start)} has no post-period cell that could be estimated: it is left out of the aggregates`)
      continue
    }
    const n = cohortPost[c]
    const est = cohortSum[c] / n
    byCohort.push({ cohort: c, estimate: est, se: seOf(psiCohort, c * N, N, 1 / n), nPost: n })
    const w = cohorts[c].size
    mixWeight += w
    mixSum += w * est
    for (let u = 0; u < N; u++) psiMix[u] += (w / n) * psiCohort[c * N + u]
  }
  const overallByCohort = { estimate: mixSum / mixWeight, se: seOf(psiMix, 0, N, 1 / mixWeight) }

  // byRelTime: keep the relative times with at least one cell, normalise their influence
  const keep: number[] = []
  for (let e = 0; e < E; e++) if (relCohorts[e] > 0) keep.push(e)
  const Ek = keep.length
  const relTimeInfluence = Ek === E ? psiRel : new Float64Array(N * Ek)
  const byRelTime: GroupTimeEffects['byRelTime'] = keep.map((e, j) => {
    const inv = 1 / relWeight[e]
    let ss = 0
    for (let u = 0; u < N; u++) {
      const v = psiRel[e * N + u] * inv
      relTimeInfluence[j * N + u] = v
      ss += v * v
    }
    return { relTime: relTimes[e], estimate: relSum[e] * inv, se: Math.sqrt(ss), nCohorts: relCohorts[e] }
  })
  return { cohorts, cells, overall, byRelTime, byCohort, overallByCohort, relTimeInfluence, incompleteUnits }
}

export interface MultiplierOptions {
  draws: number
  seed: number
  /** Coverage of the bands, e.g. 0.95. */
  level: number
}

/**
 * Rademacher multipliers for `draws` draws and `nUnits` units, one bit per unit: draw b gives
 * unit i the sign +1 when bit (i mod 32) of the draw's word (i div 32) is set, -1 otherwise.
 * Words come from seededRandom(seed), draw after draw, so a seed fixes every sign.
 */
export function rademacherBits(nUnits: number, draws: number, seed: number): { bits: Uint32Array; words: number } {
  const words = Math.ceil(nUnits / 32)
  const rng = seededRandom(seed)
  const bits = new Uint32Array(draws * words)
  for (let i = 0; i < bits.length; i++) bits[i] = (rng.uniform() * 4294967296) >>> 0
  return { bits, words }
}

/**
 * Sup-t critical value of the multiplier bootstrap: the `level` quantile (the
 * ceil(level * draws)-th smallest value) of max_k |sum_i v_i psi_ik| / se_k over the columns
 * with se_k > 0, with Rademacher v from rademacherBits. `influence` holds one column per
 * entry of `se`: psi_ik at [k * nUnits + i]. NaN when no column has a positive se.
 *
 * The sums use precomputed tables for blocks of 8 units (the 256 signed sums of their
 * values; the "four Russians" idea), so a draw costs nUnits/8 additions per column instead of
 * nUnits. Columns are taken 8 at a time so that the table and the running sums of every draw
 * stay in the processor's cache.
 */
export function supTCritical(influence: Float64Array, nUnits: number, se: ArrayLike<number>, opts: MultiplierOptions): number {
  const nCols = se.length
  if (influence.length !== nUnits * nCols) throw new EngineError('invalid_input', `supTCritical: influence must hold nUnits x columns = ${nUnits * nCols} values (got ${influence.length})`)
  const cols: number[] = []
  for (let k = 0; k < nCols; k++) if (se[k] > 0 && Number.isFinite(se[k])) cols.push(k)
  const E = cols.length
  const B = opts.draws
  if (E === 0 || B < 1 || nUnits < 1) return NaN
  const { bits, words } = rademacherBits(nUnits, B, opts.seed)
  // the sign byte of each block of 8 units in each draw, block-major: [blk * B + b]
  const nBlk = Math.ceil(nUnits / 8)
  const bytes = new Uint8Array(nBlk * B)
  for (let blk = 0; blk < nBlk; blk++) {
    const word = blk >>> 2
    const shift = (blk & 3) * 8
    for (let b = 0; b < B; b++) bytes[blk * B + b] = (bits[b * words + word] >>> shift) & 255
  }

  const W = 8
  const stats = new Float64Array(B)
  const table = new Float64Array(256 * W)
  const acc = new Float64Array(B * W)
  const colFrom = new Int32Array(W)
  const colScale = new Float64Array(W)
  const twice = new Float64Array(8 * W)
  for (let c0 = 0; c0 < E; c0 += W) {
    const w = Math.min(W, E - c0)
    // standardised columns c0..c0+w-1; missing columns of the last group are zero
    for (let j = 0; j < W; j++) {
      colFrom[j] = j < w ? cols[c0 + j] * nUnits : 0
      colScale[j] = j < w ? 1 / se[cols[c0 + j]] : 0
    }
    acc.fill(0)
    for (let blk = 0; blk < nBlk; blk++) {
      const u0 = blk * 8
      const m = Math.min(8, nUnits - u0)
      // twice the standardised values of the block's units (0 past the last unit), [r * W + j]
      for (let r = 0; r < 8; r++) {
        for (let j = 0; j < W; j++) twice[r * W + j] = r < m ? 2 * influence[colFrom[j] + u0 + r] * colScale[j] : 0
      }
      // table[mask] = sum_r s_r psi_(u0+r), s_r = +1 if bit r of mask is set, else -1
      for (let j = 0; j < W; j++) {
        let sum = 0
        for (let r = 0; r < 8; r++) sum += twice[r * W + j]
        table[j] = -sum / 2
      }
      for (let mask = 1; mask < 256; mask++) {
        const row = (31 - Math.clz32(mask & -mask)) * W
        const prev = (mask & (mask - 1)) * W
        const cur = mask * W
        table[cur] = table[prev] + twice[row]
        table[cur + 1] = table[prev + 1] + twice[row + 1]
        table[cur + 2] = table[prev + 2] + twice[row + 2]
        table[cur + 3] = table[prev + 3] + twice[row + 3]
        table[cur + 4] = table[prev + 4] + twice[row + 4]
        table[cur + 5] = table[prev + 5] + twice[row + 5]
        table[cur + 6] = table[prev + 6] + twice[row + 6]
        table[cur + 7] = table[prev + 7] + twice[row + 7]
      }
      const off = blk * B
      for (let b = 0; b < B; b++) {
        const src = bytes[off + b] * W
        const dst = b * W
        acc[dst] += table[src]
        acc[dst + 1] += table[src + 1]
        acc[dst + 2] += table[src + 2]
        acc[dst + 3] += table[src + 3]
        acc[dst + 4] += table[src + 4]
        acc[dst + 5] += table[src + 5]
        acc[dst + 6] += table[src + 6]
        acc[dst + 7] += table[src + 7]
      }
    }
    for (let b = 0; b < B; b++) {
      let mx = stats[b]
      for (let j = 0; j < w; j++) {
        const a = Math.abs(acc[b * W + j])
        if (a > mx) mx = a
      }
      stats[b] = mx
    }
  }
  stats.sort()
  return stats[Math.min(B, Math.max(1, Math.ceil(opts.level * B))) - 1]
}

/** Quantile of the standard normal: a t quantile with huge df refined by Newton steps on the normal cdf. */
function normalQuantile(p: number): number {
  let z = tQuantileAt(p, 1e12)
  for (let i = 0; i < 3; i++) {
    const density = Math.exp(-0.5 * z * z) / Math.sqrt(2 * Math.PI)
    z -= (normalCdf(z, 0, 1) - p) / density
  }
  return z
}

/**
 * Few treated units make influence-function errors, a large-sample approximation, too small.
 * The threshold of 10 is common practice (as for clustered errors), not a theorem.
 */
const FEW_TREATED = 10

export function estimateStaggered(panel: Panel, spec: Spec): EstimateResult {
  const warnings: string[] = []
  if (spec.covariates.length) throw new EngineError('invalid_spec', `design "staggered" compares outcomes without covariates (unconditional parallel trends); remove covariates ${listSome(spec.covariates)} or use "did" or "event_study"`)
  if (spec.treatmentColumn) throw new EngineError('invalid_spec', 'design "staggered" reads adoption from treated and start (a map unit -> first treated period); it does not take a treatmentColumn')
  if (spec.window) throw new EngineError('invalid_spec', 'design "staggered" uses every period (each cohort against its own base period); remove the window')
  if (spec.inference.method === 'wild_bootstrap') {
    throw new EngineError('invalid_spec', 'inference.method "wild_bootstrap" is not available for design "staggered": use "permutation" (placebo adopters), "analytic" (influence functions) or "auto"')
  }
  if (spec.start !== undefined && typeof spec.start === 'object') unitIndices(panel, Object.keys(spec.start), 'start')
  if (spec.clusterColumn) warnings.push(`clusterColumn "${spec.clusterColumn}" is not used: staggered errors come from unit-level influence functions`)
  if (spec.eventWindow) warnings.push('eventWindow is not used by design "staggered": every relative time is reported')
  const comparison: StaggeredComparison = spec.staggered?.comparison ?? 'never'

  const roles = resolveRoles(panel, spec, { requireTreated: true, requireStart: true })
  const sample = selectSample(panel, spec, roles, { columns: [] }, warnings)
  const N = sample.nUnits
  const T = sample.nPeriods
  const y = new Float64Array(N * T).fill(NaN)
  for (let i = 0; i < sample.n; i++) y[sample.unit[i] * T + sample.period[i]] = sample.y[i]
  const start = new Float64Array(N)
  for (let u = 0; u < N; u++) start[u] = roles.start[sample.unitPanel[u]]
  const label = (o: number) => periodLabel(panel, o)

  const gt = groupTimeEffects({ y, nUnits: N, nPeriods: T, periodOrdinals: sample.periodOrdinals, start, comparison, label }, warnings)
  if (gt.incompleteUnits.length) {
    const names = gt.incompleteUnits.map((u) => panel.units[sample.unitPanel[u]])
    warnings.push(
      `unbalanced panel: unit${names.length > 1 ? 's' : ''} ${listSome(names)} lack${names.length > 1 ? '' : 's'} a value in some periods; each is left out of the group-time cells whose period or base period it lacks and kept in the others`,
    )
  }
  let nTreated = 0
  for (let u = 0; u < N; u++) if (!Number.isNaN(start[u])) nTreated++
  if (nTreated < FEW_TREATED) warnings.push(`only ${nTreated} treated unit${nTreated === 1 ? '' : 's'}: influence-function errors are a large-sample approximation and may be too small`)

  const level = spec.inference.level
  const critical = supTCritical(
    gt.relTimeInfluence,
    N,
    gt.byRelTime.map((r) => r.se),
    { draws: spec.inference.draws, seed: spec.inference.seed, level },
  )

  if (Number.isFinite(critical)) {
    const off = gt.byRelTime.filter((r) => r.relTime < -1 && r.se > 0 && Math.abs(r.estimate) > critical * r.se).map((r) => r.relTime)
    if (off.length) {
      warnings.push(
        `before adoption the cohorts already drift from their comparison units: the ${Math.round(level * 100)}% simultaneous band excludes zero at ${off.length > 6 ? `${off.length} relative times from ${off[0]} to ${off[off.length - 1]}` : `relative time${off.length > 1 ? 's' : ''} ${off.join(', ')}`}; the parallel-trends assumption behind these effects is in doubt`,
      )
    }
  }
  const periodText = Array.from(sample.periodOrdinals, (o) => label(o))
  const cohortText = gt.cohorts.map((c) => label(c.start))
  const groupTime: GroupTimeCell[] = gt.cells.map((c) => ({
    cohort: cohortText[c.cohort],
    period: periodText[c.period],
    relTime: c.relTime,
    att: c.att,
    se: c.se,
    nCohort: c.nCohort,
    nComparison: c.nComparison,
    post: c.post,
  }))
  const staggered: StaggeredResult = {
    comparison,
    groupTime,
    overall: gt.overall,
    byRelTime: gt.byRelTime.map((r) => ({
      relTime: r.relTime,
      estimate: r.estimate,
      se: r.se,
      ...(Number.isFinite(critical) ? { bandLow: r.estimate - critical * r.se, bandHigh: r.estimate + critical * r.se } : {}),
    })),
    byCohort: gt.byCohort.map((c) => ({ cohort: cohortText[c.cohort], estimate: c.estimate, se: c.se })),
  }

  const { estimate, se } = gt.overall
  const t = estimate / se
  const z = normalQuantile(1 - (1 - level) / 2)
  const p = pTwoSidedNormal(t)
  const ciLow = estimate - z * se
  const ciHigh = estimate + z * se
  const bandNote = Number.isFinite(critical)
    ? `; the bands by relative time use the sup-t critical value ${critical.toFixed(3)} from ${spec.inference.draws} Rademacher multiplier draws (seed ${spec.inference.seed})`
    : ''
  // with "analytic" the influence-function interval is the headline; otherwise the shared
  // inference step (inference/apply.ts) chooses, e.g. placebo adopters when few units adopt
  const inference: InferenceResult | null = spec.inference.method !== 'analytic' ? null : {
    method: 'analytic',
    reason: `group-time effects: the overall effect's error comes from unit-level influence functions, with a normal reference${bandNote}`,
    level,
    p,
    ciLow,
    ciHigh,
    draws: null,
    enumerated: null,
    weights: null,
    seed: null,
    pRatio: null,
    ratio: null,
    pMin: null,
    placebos: null,
    gaps: null,
  }
  return {
    design: spec.design,
    nObs: sample.n,
    nUnits: N,
    nPeriods: T,
    nClusters: N,
    smallSample: null,
    vcov: 'influence',
    hacLag: null,
    effect: { term: 'att_overall', estimate, se, seIid: se, t, df: null, p, ciLow, ciHigh },
    coefficients: {},
    groupMeans: null,
    eventStudy: null,
    preTrend: null,
    durbinWatson: null,
    // no regression is fitted: the fit statistics do not apply
    fit: { ssr: NaN, sigma: NaN, rSquared: NaN, kFull: 0, kSmallSample: null },
    inference,
    synthetic: null,
    staggered,
    decomposition: null,
    errors: null,
    comparison: null,
    countFit: null,
    warnings,
  }
}
