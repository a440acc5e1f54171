/**
 * History: did something else move the outcome around the start? Two figures.
 *
 * 1. Placebo (fake) start dates inside the pre-period (in-time placebos; Abadie, Diamond and
 *    Hainmueller 2015, Am J Pol Sci 59:495-510, use the same idea with a weighted comparison).
 *    The real start and every fake date d are judged by the same like-for-like estimator: the
 *    two-by-two difference in differences of the h periods from d against the h periods before
 *    it, h = min(k, periods from the real start on), k = 3:
 *
 *      effect(d) = did2x2(treated, pool, d - h, d, d + h),    h <= d <= nPre - h for a fake,
 *      actual    = effect(nPre)
 *
 *    Equal windows matter: on real panels the gap between a unit and its pool drifts, so a
 *    difference over longer spans (the whole pre-period against the whole post-period) is
 *    larger than any pre-period split for that reason alone (bench/evidence.bench.ts measured
 *    "supports" for 60% of null adopters on Produc and 56% on Gasoline with unequal windows).
 *    share = #{|fake| >= |actual|} / n and the placebo p = (1 + #{|fake| >= |actual|}) / (1 + n),
 *    the real date counted among the dates as in a permutation test. Verdict: "supports" when
 *    p <= 0.10 (so at least 9 fake dates are needed), "weakens" when the share is above 25%,
 *    otherwise "cannot tell"; also "cannot tell" with fewer than 5 fake dates (these cut-offs are
 *    our rule, in the spirit of a 10% placebo test). Fake dates overlap and the gap is
 *    autocorrelated, so the real date (the last one) is an extreme more often than 1 in n + 1:
 *    on null adopters of real panels "supports" still comes up more often than 10% (the bench
 *    prints the figures).
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
  /** The like-for-like effect at the real start (h periods on each side). */
  actual: number
  /** Periods on each side of every date, real and fake. */
  window: number
  /** Fake start index (0-based period) and its effect. */
  fakes: { index: number, period: string, effect: number }[]
  /** Share of fake effects with |effect| >= |actual| (null without fake dates). */
  share: number | null
  /** Placebo p: (1 + fakes at least as large) / (1 + fakes), null without fake dates. */
  p: number | null
}

export function placeboDates(s: StudySeries, k = FAKE_DATE_MARGIN): PlaceboDates {
  checkStudySeries(s, 'placeboDates')
  const T = s.periods.length
  const h = Math.min(k, T - s.nPre)
  const effectAt = (d: number) => did2x2(s.treated, s.pool, d - h, d, d + h)
  const actual = effectAt(s.nPre)
  const fakes: PlaceboDates['fakes'] = []
  for (let d = h; d <= s.nPre - h; d++) {
    const effect = effectAt(d)
    if (Number.isFinite(effect)) fakes.push({ index: d, period: s.periods[d]!, effect })
  }
  // a fake effect equal to the actual one in size counts (ties at 1e-12 relative)
  const tol = 1e-12 * Math.max(1, Math.abs(actual))
  const hits = fakes.filter(f => Math.abs(f.effect) >= Math.abs(actual) - tol).length
  const n = fakes.length
  return { actual, window: h, fakes, share: n ? hits / n : null, p: n ? (1 + hits) / (1 + n) : null }
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
  const verdict = n < 5 || p.share === null || p.p === null ? 'unclear' : p.p <= 0.1 ? 'supports' : p.share > 0.25 ? 'weakens' : 'unclear'
  const few = n >= 5 && p.p !== null && p.p > 0.1
  const moved = c.z !== null && Math.abs(c.z) >= 2
  const comparisonLine = `The comparison units' own mean moved by ${num(c.change)} at the start${c.z === null ? '' : ` (${num(c.z)} pre-period standard deviations${moved ? ': they moved too, so a shock may have hit every unit; differencing nets it out only if it hit all alike' : ''})`}.`
  return {
    threat: 'history',
    verdict,
    figure: n < 5
      ? `Only ${n} fake start date${n === 1 ? '' : 's'} fit in the pre-period (each needs ${p.window} periods on both sides).`
      : `${hits} of ${n} fake start dates in the pre-period (${pct(p.share!)}) give an effect at least as large as at the real start (${num(p.actual)}), each date comparing the ${p.window} period${p.window === 1 ? '' : 's'} from it with the ${p.window} before it.`,
    explanation: `${verdict === 'supports' ? 'Effects this large are rare where no policy started, so a chance event is a less likely explanation.' : verdict === 'weakens' ? 'Effects this large are common where no policy started: other events move this gap often.' : few && p.share !== null && p.share <= 0.1 ? `Too few fake dates to call the real start unusual: with ${n} of them the smallest placebo p is ${num(1 / (n + 1))}.` : 'The fake dates neither clearly set the real start apart nor match it.'} ${comparisonLine}`,
    rule: `Supports when the placebo p, (1 + fake dates reaching the real effect) / (1 + fake dates), is at most 0.10 (at least 9 fake dates); weakens when more than 25% of fake dates reach it; cannot tell in between or with fewer than 5 fake dates. Every date, real or fake, is judged the same way: a simple two-by-two difference in differences against the pool mean of the ${p.window} periods from the date against the ${p.window} before it (fake dates inside the pre-period).`,
    figures: { actualEffect: p.actual, window: p.window, fakeDates: n, shareAtLeastActual: p.share, placeboP: p.p, comparisonChange: c.change, comparisonChangeZ: c.z },
    strip: { label: 'effect at a fake start date', values: p.fakes.map(f => f.effect), marked: p.actual, markedLabel: 'effect at the real start' },
    link: { step: 'trends', anchor: 'gap', label: 'Gap chart on the Trends step' },
  }
}
