/**
 * Distribution functions for p-values and confidence bounds, from @stdlib (Student t, F,
 * chi-square, normal). Upper tails are 1 - cdf; two-sided t p-values use the lower tail of
 * -|t|, which keeps precision for tiny p. Throws nothing; invalid df give NaN.
 */
import tCdf from '@stdlib/stats-base-dists-t-cdf'
import tQuantile from '@stdlib/stats-base-dists-t-quantile'
import fCdf from '@stdlib/stats-base-dists-f-cdf'
import chisqCdf from '@stdlib/stats-base-dists-chisquare-cdf'
import normalCdf from '@stdlib/stats-base-dists-normal-cdf'

/** Two-sided p-value of a t statistic with `df` degrees of freedom. */
export function pTwoSidedT(t: number, df: number): number {
  if (!Number.isFinite(t)) return Number.isNaN(t) ? NaN : 0
  return 2 * tCdf(-Math.abs(t), df)
}

/** Two-sided p-value against the standard normal. */
export function pTwoSidedNormal(z: number): number {
  return 2 * normalCdf(-Math.abs(z), 0, 1)
}

/** Quantile of Student t (e.g. 0.975 for a 95% interval). */
export function tQuantileAt(p: number, df: number): number {
  return tQuantile(p, df)
}

/** Upper-tail p-value of F(df1, df2). */
export function pUpperF(F: number, df1: number, df2: number): number {
  return 1 - fCdf(F, df1, df2)
}

/** Upper-tail p-value of chi-square(df). */
export function pUpperChi2(x: number, df: number): number {
  return 1 - chisqCdf(x, df)
}

/**
 * Quantile of the standard normal, as Student t's with 1e10 df (equal to the normal's to about
 * 1e-9, far below any reported digit).
 */
export function normalQuantileAt(p: number): number {
  return tQuantile(p, 1e10)
}
