/**
 * History: did something else move the outcome around the start? Two figures.
 *
 * 1. Placebo (fake) start dates inside the pre-period (in-time placebos; Abadie, Diamond and
 *    Hainmueller 2015, Am J Pol Sci 59:495-510, use the same idea with a weighted comparison).
 *    For every date d with at least k periods of pre-period on each side (k <= d <= nPre - k,
 *    k = 3), the same simple estimator as the real one, on pre-period data only:
 *
 *      fake(d) = did2x2(treated, pool, 0, d, nPre)
 *
 *    against the real effect actual = did2x2(treated, pool, 0, nPre, T). The share of fake
 *    dates with |fake| >= |actual| says how often an effect this large turns up where no
 *    policy started. Verdict: "supports" when the share is at most 10%, "weakens" when above
 *    25%, otherwise "cannot tell"; also "cannot tell" with fewer than 5 fake dates (these cut-offs
 *    are our rule, in the spirit of a 10% placebo test).
 *
 * 2. The comparison's own change at the real start: mean of the pool after minus before,
 *    in pre-period standard deviations of the pool around its own pre-period line. A large
 *    move (|z| >= 2, common practice) says a shock hit the comparison units too: a difference
 *    in differences nets it out, but a single-series design would not. Reported, not voted.
 */
import type { ThreatEvidence } from '../../../shared/engine/threats'
import { did2x2, lineOf, meanOf, num, pct } from './basics'
import { type StudySeries, checkStudySeries } from './studySeries'

export const FAKE_DATE_MARGIN = 3

export interface PlaceboDates {
  actual: number
  /** Fake start index (0-based period) and its effect. */
  fakes: { index: number, period: string, effect: number }[]
  /** Share of fake effects with |effect| >= |actual| (null without fake dates). */
  share: number | null
}

export function placeboDates(s: StudySeries, k = FAKE_DATE_MARGIN): PlaceboDates {
  checkStudySeries(s, 'placeboDates')
  const T = s.periods.length
  const actual = did2x2(s.treated, s.pool, 0, s.nPre, T)
  const fakes: PlaceboDates['fakes'] = []
  for (let d = k; d <= s.nPre - k; d++) {
    const effect = did2x2(s.treated, s.pool, 0, d, s.nPre)
    if (Number.isFinite(effect)) fakes.push({ index: d, period: s.periods[d]!, effect })
  }
  // a fake effect equal to the actual one in size counts (ties at 1e-12 relative)
  const tol = 1e-12 * Math.max(1, Math.abs(actual))
  const share = fakes.length ? fakes.filter(f => Math.abs(f.effect) >= Math.abs(actual) - tol).length / fakes.length : null
  return { actual, fakes, share }
}

/** The pool mean's change at the start in pre-period residual standard deviations. */
export function comparisonChange(s: StudySeries): { change: number, z: number | null } {
  checkStudySeries(s, 'comparisonChange')
  const change = meanOf(s.pool, s.nPre) - meanOf(s.pool, 0, s.nPre)
  const line = lineOf(s.pool, 0, s.nPre)
  return { change, z: line && line.sigma > 0 ? change / line.sigma : null }
}

export function historyEvidence(s: StudySeries, k = FAKE_DATE_MARGIN): ThreatEvidence {
  const p = placeboDates(s, k)
  const c = comparisonChange(s)
  const n = p.fakes.length
  const hits = p.share === null ? 0 : Math.round(p.share * n)
  const verdict = n < 5 || p.share === null ? 'unclear' : p.share <= 0.1 ? 'supports' : p.share > 0.25 ? 'weakens' : 'unclear'
  const moved = c.z !== null && Math.abs(c.z) >= 2
  const comparisonLine = `The comparison units' own mean moved by ${num(c.change)} at the start${c.z === null ? '' : ` (${num(c.z)} pre-period standard deviations${moved ? ': they moved too, so a shock may have hit every unit; differencing nets it out only if it hit all alike' : ''})`}.`
  return {
    threat: 'history',
    verdict,
    figure: n < 5
      ? `Only ${n} fake start date${n === 1 ? '' : 's'} fit in the pre-period (each needs ${k} periods on both sides).`
      : `${hits} of ${n} fake start dates in the pre-period (${pct(p.share!)}) give an effect at least as large as at the real start (${num(p.actual)}).`,
    explanation: `${verdict === 'supports' ? 'Effects this large are rare where no policy started, so a chance event is a less likely explanation.' : verdict === 'weakens' ? 'Effects this large are common where no policy started: other events move this gap often.' : 'The fake dates neither clearly set the real start apart nor match it.'} ${comparisonLine}`,
    rule: `Supports when at most 10% of fake dates reach the real effect, weakens above 25%, cannot tell in between or with fewer than 5 fake dates (fake dates at least ${k} periods from both ends of the pre-period; simple two-by-two difference in differences against the pool mean).`,
    figures: { actualEffect: p.actual, fakeDates: n, shareAtLeastActual: p.share, comparisonChange: c.change, comparisonChangeZ: c.z },
    strip: { label: 'effect at a fake start date', values: p.fakes.map(f => f.effect), marked: p.actual, markedLabel: 'effect at the real start' },
    link: { step: 'trends', anchor: 'gap', label: 'Gap chart on the Trends step' },
  }
}
