/**
 * Maturation: would the outcome have drifted anyway? The pre-period linear trend (OLS slope
 * on the period index, classical SE and 95% t interval; basics.ts) of the treated series and
 * of the gap (treated minus pool mean).
 *
 * Verdict: "weakens" when the gap's slope interval excludes 0 (the treated unit drifted
 * apart from its comparison before the start, so a drift that is not shared could pass for an
 * effect); "supports" when it includes 0 (the drift is shared by the comparison); "cannot
 * tell" with fewer than 6 pre-periods. The classical SE ignores autocorrelation, so an
 * interval that includes 0 is a weak reassurance: the text says so.
 */
import type { ThreatEvidence } from '../../../shared/engine/threats'
import { type Line, lineOf, num } from './basics'
import { type StudySeries, checkStudySeries } from './studySeries'

export function preTrends(s: StudySeries): { treated: Line | null, gap: Line | null } {
  checkStudySeries(s, 'preTrends')
  const gap = Float64Array.from({ length: s.nPre }, (_, t) => s.treated[t]! - s.pool[t]!)
  return { treated: lineOf(s.treated, 0, s.nPre), gap: lineOf(gap) }
}

const slopeText = (l: Line) => `${num(l.slope)} per period (95% ${num(l.ciLow)} to ${num(l.ciHigh)})`

export function maturationEvidence(s: StudySeries): ThreatEvidence {
  const { treated, gap } = preTrends(s)
  const enough = s.nPre >= 6 && treated && gap
  const apart = enough && (gap.ciLow > 0 || gap.ciHigh < 0)
  const verdict = !enough ? 'unclear' : apart ? 'weakens' : 'supports'
  return {
    threat: 'maturation',
    verdict,
    figure: enough
      ? `Before the start the treated series moved ${slopeText(treated)}; the gap to the pool moved ${slopeText(gap)}.`
      : `Only ${s.nPre} pre-period${s.nPre === 1 ? '' : 's'}: too few to estimate a trend.`,
    explanation: !enough
      ? 'A drift cannot be told from noise on so few periods.'
      : apart
        ? 'The treated unit was already drifting away from its comparison: a comparison-group estimate counts that drift as effect unless the design allows for it.'
        : 'The treated unit\'s drift is shared by its comparison (the gap shows no clear trend), so the comparison absorbs it; the interval assumes independent errors and may be too narrow.',
    rule: 'Weakens when the 95% interval of the gap\'s pre-period slope excludes zero; supports when it includes zero; cannot tell with fewer than 6 pre-periods.',
    figures: {
      treatedSlope: treated?.slope ?? null, treatedSlopeLow: treated?.ciLow ?? null, treatedSlopeHigh: treated?.ciHigh ?? null,
      gapSlope: gap?.slope ?? null, gapSlopeLow: gap?.ciLow ?? null, gapSlopeHigh: gap?.ciHigh ?? null,
    },
    strip: null,
    link: { step: 'trends', anchor: 'gap', label: 'Gap chart on the Trends step' },
  }
}
