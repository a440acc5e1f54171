/**
 * Small pure helpers shared by the threat evidence modules: means that skip missing values
 * (NaN), the OLS line of a series on its period index with the slope's classical standard
 * error and t interval, and a two-by-two difference in differences of two series.
 *
 * The classical slope SE is s / sqrt(sum (t - tbar)^2), s^2 = SSR / (n - 2) (any regression
 * text, e.g. Wooldridge, Introductory Econometrics, ch. 2); with autocorrelated errors it is
 * too small, which the evidence says where it uses it.
 */
import { tQuantileAt } from '../distributions'

export function meanOf(xs: ArrayLike<number>, from = 0, to = xs.length): number {
  let s = 0
  let n = 0
  for (let i = from; i < to; i++) {
    const v = xs[i]!
    if (Number.isFinite(v)) {
      s += v
      n++
    }
  }
  return n ? s / n : NaN
}

export interface Line {
  intercept: number
  slope: number
  se: number
  ciLow: number
  ciHigh: number
  /** Residual standard deviation sqrt(SSR / (n - 2)). */
  sigma: number
  n: number
}

/** OLS of xs[from..to) on their index (0-based within the range), skipping NaN; null under 3 points. */
export function lineOf(xs: ArrayLike<number>, from = 0, to = xs.length, level = 0.95): Line | null {
  const t: number[] = []
  const y: number[] = []
  for (let i = from; i < to; i++) {
    const v = xs[i]!
    if (Number.isFinite(v)) {
      t.push(i - from)
      y.push(v)
    }
  }
  const n = y.length
  if (n < 3) return null
  const mt = t.reduce((a, b) => a + b, 0) / n
  const my = y.reduce((a, b) => a + b, 0) / n
  let sxx = 0
  let sxy = 0
  for (let k = 0; k < n; k++) {
    sxx += (t[k]! - mt) ** 2
    sxy += (t[k]! - mt) * (y[k]! - my)
  }
  const slope = sxy / sxx
  const intercept = my - slope * mt
  let ssr = 0
  for (let k = 0; k < n; k++) ssr += (y[k]! - intercept - slope * t[k]!) ** 2
  const sigma = Math.sqrt(ssr / (n - 2))
  const se = sigma / Math.sqrt(sxx)
  const c = tQuantileAt(0.5 + level / 2, n - 2)
  return { intercept, slope, se, ciLow: slope - c * se, ciHigh: slope + c * se, sigma, n }
}

/**
 * Two-by-two difference in differences on periods [from, split) against [split, to):
 * (mean treated after - mean treated before) - (mean comparison after - mean comparison before).
 */
export function did2x2(treated: ArrayLike<number>, comparison: ArrayLike<number>, from: number, split: number, to: number): number {
  return meanOf(treated, split, to) - meanOf(treated, from, split) - (meanOf(comparison, split, to) - meanOf(comparison, from, split))
}

/** Per-period mean of several series (NaN where none has a value). */
export function meanSeries(series: ArrayLike<number>[], length: number): Float64Array {
  const out = new Float64Array(length)
  for (let t = 0; t < length; t++) {
    let s = 0
    let n = 0
    for (const x of series) {
      const v = x[t]!
      if (Number.isFinite(v)) {
        s += v
        n++
      }
    }
    out[t] = n ? s / n : NaN
  }
  return out
}

/** Percentile rank of v among xs: share below plus half the share equal (0..1). */
export function percentileRank(v: number, xs: number[]): number {
  let below = 0
  let equal = 0
  for (const x of xs) {
    if (x < v) below++
    else if (x === v) equal++
  }
  return (below + equal / 2) / xs.length
}

/** A number for sentences: 3 significant digits, no exponent for ordinary sizes. */
export function num(x: number): string {
  if (!Number.isFinite(x)) return 'n/a'
  const a = Math.abs(x)
  if (a !== 0 && (a < 0.001 || a >= 1e6)) return x.toExponential(2)
  return Number(x.toPrecision(3)).toString()
}

export const pct = (x: number) => `${Math.round(x * 100)}%`

/** "37th percentile" style ordinal of a share (0..1), rounded to a whole percent. */
export function percentileText(x: number): string {
  const n = Math.round(x * 100)
  const suffix = n % 100 >= 11 && n % 100 <= 13 ? 'th' : ({ 1: 'st', 2: 'nd', 3: 'rd' } as Record<number, string>)[n % 10] ?? 'th'
  return `${n}${suffix} percentile`
}
