/**
 * Regression to the mean: was the policy adopted right after an unusual spike or dip? The
 * treated series' last pre-periods against its earlier pre-period, detrended:
 *
 *   earlier = pre-periods [0, n), n = nPre - m, m = 2 (the last two are the "recent" ones);
 *   line    = OLS of earlier on the period index (basics.ts), s = its residual SD;
 *   z       = (mean of the last m values - mean of the line projected to those periods)
 *             / (s sqrt(1/m + 1/n + (tm - tbar)^2 / sum (t - tbar)^2)),
 *
 * tm the mean index of the recent periods: the standardised prediction error of the mean of m
 * new values (the prediction interval of simple regression, e.g. Wooldridge, Introductory
 * Econometrics, ch. 6), t with n - 2 degrees of freedom when errors are independent and normal.
 * (m = 1 gives the last pre-period alone.)
 *
 * Verdict: "weakens" when the spike is unusual both in the unit's own history (|z| at or above
 * the two-sided 5% t quantile, n - 2 df) and among the other units at the same date (|z| above
 * the 95th percentile of the candidates' |z|, each computed the same way, when there are at
 * least 10 candidates): adoption followed a spike of its own, and part of the measured change
 * may be the series falling back. "Supports" otherwise; "cannot tell" with fewer than 6 earlier
 * periods or no variation. Both conditions are needed because real series wander: on null
 * adopters of real panels (bench/evidence.bench.ts) the earlier rule, |z| >= 2 in residual SDs
 * of the own history alone, said "weakens" for 21% (Produc) and 50% (Gasoline) of them, from
 * autocorrelated deviations and shocks that hit every unit at once (a comparison nets those
 * out). The candidates' ranking is calibrated by exchangeability; a spike shared by every unit
 * does not show here, which matters for a design without comparison units. Seasonal series: a
 * seasonal peak just before the start can look like a spike; the text says so.
 */
import type { ThreatEvidence } from '../../../shared/engine/threats'
import { tQuantileAt } from '../distributions'
import { lineOf, meanOf, num, percentileRank, percentileText } from './basics'
import { type StudySeries, checkStudySeries } from './studySeries'

export const SPIKE_EARLIER_MIN = 6
export const SPIKE_CANDIDATES_MIN = 10

export interface Spike {
  /** Standardised prediction error of the recent mean (null without a line or variation). */
  z: number | null
  recent: number
  expected: number
  /** Residual SD of the earlier line. */
  sd: number
  /** Earlier periods the line is fitted on. */
  n: number
}

/** The spike z of values[0..nPre) with the last m as the recent periods. */
export function spikeOf(values: ArrayLike<number>, nPre: number, m = 2): Spike {
  const cut = nPre - m
  const line = cut >= 3 ? lineOf(values, 0, cut) : null
  const recent = meanOf(values, cut, nPre)
  if (!line || !(line.sigma > 0) || !Number.isFinite(recent)) return { z: null, recent, expected: NaN, sd: NaN, n: line?.n ?? 0 }
  // the indexes the line was fitted on (values may be missing)
  const ts: number[] = []
  for (let t = 0; t < cut; t++) if (Number.isFinite(values[t]!)) ts.push(t)
  const tbar = ts.reduce((a, b) => a + b, 0) / ts.length
  const sxx = ts.reduce((a, t) => a + (t - tbar) ** 2, 0)
  const tm = cut + (m - 1) / 2
  const expected = line.intercept + line.slope * tm
  const scale = Math.sqrt(1 / m + 1 / line.n + (tm - tbar) ** 2 / sxx)
  return { z: (recent - expected) / (line.sigma * scale), recent, expected, sd: line.sigma, n: line.n }
}

export function spikeZ(s: StudySeries, m = 2): Spike {
  checkStudySeries(s, 'spikeZ')
  return spikeOf(s.treated, s.nPre, m)
}

export function regressionToMeanEvidence(s: StudySeries, m = 2, candidates: { unit: string, values: ArrayLike<number> }[] = []): ThreatEvidence {
  const r = spikeZ(s, m)
  const enough = s.nPre - m >= SPIKE_EARLIER_MIN && r.z !== null && r.n >= SPIKE_EARLIER_MIN
  const crit = enough ? tQuantileAt(0.975, r.n - 2) : NaN
  const own = enough && Math.abs(r.z!) >= crit
  const candidateZ = candidates.map(c => spikeOf(c.values, s.nPre, m).z).filter((z): z is number => z !== null)
  const others = candidateZ.map(Math.abs)
  const ranked = enough && others.length >= SPIKE_CANDIDATES_MIN
  const rank = ranked ? percentileRank(Math.abs(r.z!), others) : null
  const amongOthers = rank === null || rank > 0.95
  const spike = own && amongOthers
  const verdict = !enough ? 'unclear' : spike ? 'weakens' : 'supports'
  const rankText = rank === null ? '' : `; its size is at the ${percentileText(rank)} of ${others.length} candidates' at the same date`
  return {
    threat: 'regression_to_mean',
    verdict,
    figure: enough
      ? `The last ${m} pre-periods averaged ${num(r.recent)} against ${num(r.expected)} expected from the earlier pre-period's trend: z = ${num(r.z!)} (5% bound ${num(crit)})${rankText}.`
      : 'Too few pre-periods (or no variation) to judge whether the start followed a spike.',
    explanation: !enough
      ? 'A spike cannot be told from the usual variation here.'
      : spike
        ? `Adoption followed a ${r.z! > 0 ? 'spike' : 'dip'} of its own: the series may have fallen back on its own, and that fall would count as effect.`
        : own
          ? 'The last pre-periods left the earlier trend, but other units moved as much at the same date: a shared movement, which a comparison nets out (a design without comparison units does not).'
          : 'The start did not follow an unusual spike or dip; a seasonal peak just before the start would also show here.',
    rule: `Weakens when |z| reaches the two-sided 5% t bound and, with at least ${SPIKE_CANDIDATES_MIN} candidates, is above the 95th percentile of the candidates' |z| at the same date; supports otherwise; cannot tell with fewer than ${SPIKE_EARLIER_MIN} earlier pre-periods. z is the mean of the last ${m} pre-periods minus the earlier pre-period's trend line projected to them, over the standard error of that prediction.`,
    figures: { z: r.z, bound: Number.isFinite(crit) ? crit : null, candidatePercentile: rank, recentMean: r.recent, expected: Number.isFinite(r.expected) ? r.expected : null, residualSd: Number.isFinite(r.sd) ? r.sd : null },
    strip: ranked ? { label: 'candidate\'s spike z', values: candidateZ, marked: r.z, markedLabel: 'treated spike z' } : null,
    link: { step: 'trends', anchor: 'levels', label: 'Treated against the pool on the Trends step' },
  }
}
