/**
 * Regression to the mean: was the policy adopted right after an unusual spike or dip? The
 * treated series' last pre-periods against its earlier pre-period, detrended:
 *
 *   earlier = pre-periods [0, nPre - m), m = 2 (the last two are the "recent" ones);
 *   line    = OLS of earlier on the period index (basics.ts), s = its residual SD;
 *   z       = (mean of the last m values - mean of the line projected to those periods) / s.
 *
 * (m = 1 gives the z-score of the last pre-period alone.) Verdict: "weakens" when |z| >= 2:
 * adoption followed a spike (common practice: two standard deviations), and part of the
 * measured change may be the series falling back; "supports" when |z| < 2; "cannot tell"
 * with fewer than 6 earlier periods or no variation. Seasonal series: a seasonal peak just
 * before the start can look like a spike; the text says so.
 */
import type { ThreatEvidence } from '../../../shared/engine/threats'
import { lineOf, meanOf, num } from './basics'
import { type StudySeries, checkStudySeries } from './studySeries'

export function spikeZ(s: StudySeries, m = 2): { z: number | null, recent: number, expected: number, sd: number } {
  checkStudySeries(s, 'spikeZ')
  const cut = s.nPre - m
  const line = cut >= 3 ? lineOf(s.treated, 0, cut) : null
  const recent = meanOf(s.treated, cut, s.nPre)
  if (!line || !(line.sigma > 0)) return { z: null, recent, expected: NaN, sd: NaN }
  let expected = 0
  for (let t = cut; t < s.nPre; t++) expected += line.intercept + line.slope * t
  expected /= m
  return { z: (recent - expected) / line.sigma, recent, expected, sd: line.sigma }
}

export function regressionToMeanEvidence(s: StudySeries, m = 2): ThreatEvidence {
  const r = spikeZ(s, m)
  const enough = s.nPre - m >= 6 && r.z !== null
  const spike = enough && Math.abs(r.z!) >= 2
  const verdict = !enough ? 'unclear' : spike ? 'weakens' : 'supports'
  return {
    threat: 'regression_to_mean',
    verdict,
    figure: enough
      ? `The last ${m} pre-periods averaged ${num(r.recent)} against ${num(r.expected)} expected from the earlier pre-period's trend: z = ${num(r.z!)}.`
      : 'Too few pre-periods (or no variation) to judge whether the start followed a spike.',
    explanation: !enough
      ? 'A spike cannot be told from the usual variation here.'
      : spike
        ? `Adoption followed a ${r.z! > 0 ? 'spike' : 'dip'}: the series may have fallen back on its own, and that fall would count as effect.`
        : 'The start did not follow an unusual spike or dip; a seasonal peak just before the start would also show here.',
    rule: 'Weakens when |z| >= 2 (common practice: two standard deviations); supports below; cannot tell with fewer than 6 earlier pre-periods. z compares the mean of the last two pre-periods with the earlier pre-period\'s trend line, in its residual standard deviations.',
    figures: { z: r.z, recentMean: r.recent, expected: Number.isFinite(r.expected) ? r.expected : null, residualSd: Number.isFinite(r.sd) ? r.sd : null },
    strip: null,
    link: { step: 'trends', anchor: 'levels', label: 'Treated against the pool on the Trends step' },
  }
}
