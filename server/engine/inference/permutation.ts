/**
 * Placebo-in-space (permutation) inference (Abadie, Diamond and Hainmueller 2010, JASA 105:
 * 493-505; for difference-in-differences with few treated units, Conley and Taber 2011, REStat
 * 93: 113-125). Every comparison unit in turn (or, with k treated units, every set of k
 * comparison units) plays the treated unit, with the other comparison units as its pool; the
 * real treated units are never in a pool. The same estimator gives one placebo effect per set.
 *
 *   p      = (1 + #{|placebo| >= |actual|}) / (1 + n)            (n placebo sets)
 *   pRatio = (1 + #{ratio_placebo >= ratio_actual}) / (1 + n)
 *
 * ratio = RMSPE(post) / RMSPE(pre) of a unit's gap. Ties count as exceedances (relative slack
 * 1e-9). A permutation p-value cannot fall below 1/(n + 1): with 9 placebos no p under 0.1.
 *
 * Interval by test inversion: tau is kept when subtracting tau from the treated units' post-
 * period outcomes gives p(tau) > 1 - level. For estimators linear in the outcome in which the
 * treated post rows enter as the regressor of interest (two-way fixed effects, the 2x2, the
 * event study's mean lag, a level change of a difference series) that subtraction moves the
 * actual estimate by exactly -tau and leaves every placebo unchanged (the treated units are in
 * no pool), so the kept set is [est - A_(m), est + A_(m)], A_(m) the m-th largest |placebo|
 * and m the smallest count with (1 + m)/(1 + n) > 1 - level. With too few placebos no m
 * exists and the interval is unbounded (null bounds).
 *
 * Pure; throws RangeError on impossible arguments (callers check the spec first).
 */
import type { Placebo } from '../../../shared/engine/result'
import { type SeededRandom, sampleWithoutReplacement } from '../random'

const SLACK = 1e-9

/** Number of k-subsets of n (Infinity past 2^53). */
export function binomial(n: number, k: number): number {
  if (k < 0 || k > n) return 0
  let c = 1
  for (let i = 1; i <= Math.min(k, n - k); i++) {
    c = (c * (n - k + i)) / i
    if (c > Number.MAX_SAFE_INTEGER) return Infinity
  }
  return Math.round(c)
}

/**
 * Placebo sets of k out of n comparison positions: every set (lexicographic) when there are at
 * most `draws`, else `draws` sets drawn with the seeded generator (each set distinct inside,
 * sets drawn independently).
 */
export function placeboSets(n: number, k: number, draws: number, rng: SeededRandom): { sets: number[][]; enumerated: boolean } {
  if (k < 1 || k > n) throw new RangeError(`placeboSets: cannot form sets of ${k} from ${n} comparison units`)
  const total = binomial(n, k)
  if (total <= draws) {
    const sets: number[][] = []
    const idx = Array.from({ length: k }, (_, i) => i)
    for (;;) {
      sets.push([...idx])
      let i = k - 1
      while (i >= 0 && idx[i] === n - k + i) i--
      if (i < 0) break
      idx[i]++
      for (let j = i + 1; j < k; j++) idx[j] = idx[j - 1] + 1
    }
    return { sets, enumerated: true }
  }
  const sets: number[][] = []
  for (let d = 0; d < draws; d++) sets.push(sampleWithoutReplacement(rng, n, k))
  return { sets, enumerated: false }
}

export interface PermutationOutcome {
  p: number
  pRatio: number | null
  ciLow: number | null
  ciHigh: number | null
  pMin: number
  /** m: how many placebos must be at least as large for tau to be kept (null: unbounded). */
  rankForLevel: number | null
}

/** p-values and the inverted interval from the actual effect and the placebo effects. */
export function permutationOutcome(actual: { estimate: number; ratio: number | null }, placebos: Placebo[], level: number): PermutationOutcome {
  const n = placebos.length
  if (n === 0) throw new RangeError('permutationOutcome: no placebos')
  const a = Math.abs(actual.estimate)
  let over = 0
  for (const pl of placebos) if (Math.abs(pl.estimate) >= a * (1 - SLACK)) over++
  let pRatio: number | null = null
  if (actual.ratio !== null && Number.isFinite(actual.ratio) && placebos.every((pl) => pl.ratio !== null && Number.isFinite(pl.ratio))) {
    let overR = 0
    for (const pl of placebos) if ((pl.ratio as number) >= actual.ratio * (1 - SLACK)) overR++
    pRatio = (1 + overR) / (1 + n)
  }
  const alpha = 1 - level
  // smallest m with (1 + m)/(1 + n) > alpha
  const m = Math.floor(alpha * (1 + n) - 1 + 1e-12) + 1
  let ciLow: number | null = null
  let ciHigh: number | null = null
  let rankForLevel: number | null = null
  if (m >= 1 && m <= n) {
    const sorted = placebos.map((pl) => Math.abs(pl.estimate)).sort((x, y) => y - x)
    const half = sorted[m - 1]
    ciLow = actual.estimate - half
    ciHigh = actual.estimate + half
    rankForLevel = m
  }
  return { p: (1 + over) / (1 + n), pRatio, ciLow, ciHigh, pMin: 1 / (1 + n), rankForLevel }
}

/**
 * Post/pre RMSPE ratio of a gap series: the gap minus its pre-period mean when `demean`
 * (difference-in-differences gaps), raw otherwise (weighted comparison). NaN entries are
 * skipped; null when either side has no value or the pre RMSPE is 0.
 */
export function rmspeRatio(gap: Float64Array, isPost: Uint8Array, demean: boolean): number | null {
  let preSum = 0
  let preN = 0
  for (let t = 0; t < gap.length; t++) {
    if (!isPost[t] && !Number.isNaN(gap[t])) {
      preSum += gap[t]
      preN++
    }
  }
  if (!preN) return null
  const shift = demean ? preSum / preN : 0
  let pre = 0
  let post = 0
  let postN = 0
  for (let t = 0; t < gap.length; t++) {
    const g = gap[t]
    if (Number.isNaN(g)) continue
    if (isPost[t]) {
      post += (g - shift) ** 2
      postN++
    } else pre += (g - shift) ** 2
  }
  if (!postN || !(pre > 0)) return null
  return Math.sqrt(post / postN) / Math.sqrt(pre / preN)
}
