/**
 * Selection: is the treated unit unlike the jurisdictions it could be compared with? Its
 * pre-period level (mean) and trend (OLS slope on the period index, basics.ts) against every
 * candidate's (every untreated unit with data, not only the pool), as percentile ranks
 * (share below plus half the share equal).
 *
 * Verdict: "weakens" when the level or the trend lies beyond the 5th or 95th percentile of
 * the candidates (an outlier; common practice), since units chosen for being extreme may
 * follow other trends than any comparison; "supports" when both lie inside; "cannot tell"
 * with fewer than 10 candidates having a level and a trend.
 */
import type { ThreatEvidence } from '../../../shared/engine/threats'
import { lineOf, meanOf, num, percentileRank, percentileText } from './basics'

export interface SelectionInput {
  nPre: number
  treated: ArrayLike<number>
  /** Every candidate's series on the same periods. */
  candidates: { unit: string, values: ArrayLike<number> }[]
}

export function preLevelAndTrend(values: ArrayLike<number>, nPre: number): { level: number, trend: number } | null {
  const level = meanOf(values, 0, nPre)
  const line = lineOf(values, 0, nPre)
  return Number.isFinite(level) && line ? { level, trend: line.slope } : null
}

export function selectionRanks(x: SelectionInput) {
  const own = preLevelAndTrend(x.treated, x.nPre)
  const others = x.candidates.map(c => preLevelAndTrend(c.values, x.nPre)).filter((v): v is { level: number, trend: number } => v !== null)
  if (!own || !others.length) return { own, n: others.length, levelRank: null, trendRank: null, levels: [] as number[], trends: [] as number[] }
  const levels = others.map(o => o.level)
  const trends = others.map(o => o.trend)
  return { own, n: others.length, levelRank: percentileRank(own.level, levels), trendRank: percentileRank(own.trend, trends), levels, trends }
}

const outside = (r: number | null) => r !== null && (r < 0.05 || r > 0.95)

export function selectionEvidence(x: SelectionInput): ThreatEvidence {
  const s = selectionRanks(x)
  const enough = s.n >= 10 && s.levelRank !== null && s.trendRank !== null
  const outlier = enough && (outside(s.levelRank) || outside(s.trendRank))
  const verdict = !enough ? 'unclear' : outlier ? 'weakens' : 'supports'
  const which = [outside(s.levelRank) ? 'level' : null, outside(s.trendRank) ? 'trend' : null].filter(Boolean).join(' and ')
  return {
    threat: 'selection',
    verdict,
    figure: enough
      ? `Before the start the treated level (${num(s.own!.level)}) sits at the ${percentileText(s.levelRank!)} and its trend (${num(s.own!.trend)} per period) at the ${percentileText(s.trendRank!)} of ${s.n} candidates.`
      : `Only ${s.n} candidate${s.n === 1 ? '' : 's'} with a pre-period level and trend: too few to rank the treated unit.`,
    explanation: !enough
      ? 'With so few candidates an outlier cannot be told from an ordinary unit.'
      : outlier
        ? `The treated unit is an outlier in its ${which}: units chosen for being extreme may follow other paths than any comparison, and a weighted comparison may not reach them.`
        : 'The treated unit is within the range of the candidates in level and trend; differences in unmeasured traits would not show here.',
    rule: 'Weakens when the pre-period level or trend lies below the 5th or above the 95th percentile of all candidates (common practice); supports inside; cannot tell with fewer than 10 candidates.',
    figures: { candidates: s.n, levelPercentile: s.levelRank, trendPercentile: s.trendRank, treatedLevel: s.own?.level ?? null, treatedTrend: s.own?.trend ?? null },
    strip: enough ? { label: 'candidate\'s pre-period level', values: s.levels, marked: s.own!.level, markedLabel: 'treated pre-period level' } : null,
    link: { step: 'pool', anchor: 'candidates', label: 'Candidates on the Pool step' },
  }
}
