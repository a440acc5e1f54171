/**
 * Each robustness check's result in plain words: one sentence of what was found and, where
 * the finding should worry a reader, a caution. The Robustness and Review steps, the workbook
 * and the report all say the same. Pure; auto-imported on both sides.
 */
import type { RobustnessResult } from '../engine/robustness'

const num = (v: number | null | undefined) => (v === null || v === undefined || !Number.isFinite(v) ? '–' : Number(v.toPrecision(3)).toLocaleString('en', { maximumSignificantDigits: 3 }))
const pct = (v: number) => `${Math.round(v * 100)}%`
const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`

/** Above this share of placebos as large as the actual effect, the effect does not stand out (common practice: 10%). */
export const STANDS_OUT_SHARE = 0.1

export interface RobustnessWords {
  finding: string
  /** A caution when the check weakens the estimate, else null. */
  caution: string | null
}

export function robustnessWords(r: RobustnessResult): RobustnessWords {
  switch (r.kind) {
    case 'placebo_time': {
      if (r.share === null) return { finding: 'No fake start date could be estimated.', caution: 'The placebo in time gives no evidence either way.' }
      return {
        finding: `${plural(r.n, 'fake start date')} in the pre-period (at least ${plural(r.minDistance, 'period')} from either end): ${r.atLeastAsLarge} of them (${pct(r.share)}) give an effect at least as large as the actual ${num(r.actual.estimate)}${r.window ? ` (every effect, the actual one included, over ${plural(r.window, 'period')} either side of its start)` : ''}.`,
        caution: r.share > STANDS_OUT_SHARE ? 'Fake start dates before the policy give effects as large as the actual one: the estimate may reflect drift or shocks the design does not capture.' : null,
      }
    }
    case 'placebo_space': {
      const share = r.share ?? 0
      return {
        finding: `${plural(r.n, 'comparison jurisdiction')} each played the treated one: ${r.atLeastAsLarge} of them (${pct(share)}) show an effect at least as large as the actual ${num(r.actual)} (p = ${r.p.toFixed(3)}; the smallest possible is ${r.pMin.toFixed(3)}).`,
        caution: share > STANDS_OUT_SHARE ? 'Jurisdictions without the policy show effects as large as the treated one: the estimate is hard to tell from ordinary variation.' : r.ciLow === null ? 'Too few comparison jurisdictions to bound an interval by placebo units.' : null,
      }
    }
    case 'leave_one_out': {
      if (r.min === null || r.max === null) return { finding: 'No donor could be left out.', caution: null }
      const flips = r.min < 0 && r.max > 0
      return {
        finding: `Leaving out one comparison jurisdiction at a time, the estimate ranges from ${num(r.min)} to ${num(r.max)} (all of them: ${num(r.full)}); it moves most without ${r.mostInfluential.join(', ')}.`,
        caution: flips ? 'Leaving out a single jurisdiction changes the sign of the estimate: the result rests on that jurisdiction.' : null,
      }
    }
    case 'pools': {
      const est = r.pools.filter(p => p.estimate !== null)
      if (!est.length) return { finding: 'No alternative pool could be estimated.', caution: null }
      const values = est.map(p => p.estimate!)
      const disagree = values.some(v => Math.sign(v) !== Math.sign(values[0]!))
      return {
        finding: `On ${plural(est.length, 'pool')} the estimate ranges from ${num(Math.min(...values))} to ${num(Math.max(...values))}.`,
        caution: disagree ? 'The pools disagree on the direction of the effect: the estimate depends on which jurisdictions it is compared with.' : null,
      }
    }
  }
}

/** Cautions shown beside every robustness result. */
export const ROBUSTNESS_CAUTIONS = [
  'Passing these checks does not prove the policy caused the change; failing one is a reason to look closer, not a verdict.',
  'Checks share the run\'s data and design: a problem in both (a wrong start date, a measure that changed definition) passes unnoticed.',
  'Judge the result against your agency\'s evaluation standards, and have it reviewed by a qualified evaluator before it informs a decision.',
]
