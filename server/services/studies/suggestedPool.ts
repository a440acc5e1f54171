/**
 * The suggested pool of the Pool step: which candidates to offer as comparison units before
 * the analyst decides. Pure: no database, no framework.
 *
 * Why not the best overall fit: unit fixed effects absorb a difference in LEVEL, not a
 * difference in TREND. A difference-in-differences on a pool whose pre-period slope differs
 * from the treated unit's by s per period is biased by about s times the distance (in
 * periods) between the middle of the pre-period and the middle of the post-period: the
 * parallel-trends assumption fails for that pool (Abadie 2005, Rev. Econ. Studies 72:1-19,
 * treats parallel trends that hold only among comparable units). A candidate can fit the
 * level closely (small RMSPE) while drifting away; one far in level but parallel is
 * harmless once demeaned.
 *
 * Rule (k = pool size asked for, default 10):
 * 1. Eligible: candidates without a flag whose demeaned RMSPE and slope difference exist.
 *    When no candidate has a slope difference (a single pre-period), the trend test is
 *    skipped and said so.
 * 2. Trend test: the slope difference (treated minus candidate, OLS on the period index over
 *    the pre-period) is small against its spread across the eligible candidates: |slopeDiff|
 *    at most the limit L, the larger of the ceil(n/3)-th and the k-th smallest |slopeDiff|
 *    among the n eligible (so the closest third in trend, and never fewer than k).
 * 3. Among those that pass, the k with the smallest demeaned RMSPE (each series minus its
 *    own pre-period mean: the fit a difference-in-differences relies on); ties by |slopeDiff|
 *    then code.
 * Each suggested unit gets a plain-words reason with its figures (its rank is by demeaned
 * RMSPE among those that pass the trend test).
 *
 * Measured on the demo (VM-BR-04 adopting 2017-07, window ending 2019-12, truth -0.8): the
 * did estimate on this pool is -0.85, on the old pool (top 10 by composite rank) -0.91; over
 * the whole post-period (truth -1.07 on average) -1.12 against -1.22. With each of the 55
 * untreated units in turn as a fake 2017-07 adopter (whole post-period, true effect 0), the
 * placebo estimates average -0.005 (root mean square 0.163) with this rule and -0.022
 * (0.170) with the old one (tests/server/services/studies/suggestedPool.test.ts).
 *
 * Throws nothing: with no eligible candidate the pool is empty and `note` says why.
 */

export interface SuggestionCandidate {
  unit: string
  flagged: boolean
  /** Pre-period RMSPE after subtracting each series' own mean. */
  rmspeDemeaned: number | null
  /** Pre-period OLS slope on the period index, treated minus candidate. */
  slopeDiff: number | null
}

export interface SuggestedPool {
  /** Suggested units, best first (smallest demeaned RMSPE). */
  pool: string[]
  /** Plain-words reason for each suggested unit. */
  reasons: Map<string, string>
  /** The |slope difference| limit of the trend test (null when it was skipped). */
  slopeLimit: number | null
  /** Unflagged candidates with both scores. */
  eligible: number
  /** How many of them passed the trend test. */
  passed: number
  /** One sentence describing the rule as applied, for the page. */
  rule: string
  /** Why the pool is empty or the trend test was skipped; null otherwise. */
  note: string | null
}

/** Share of the eligible candidates the trend test keeps at least (the closest in trend). */
export const TREND_SHARE = 1 / 3

/** Short text for a small score: 2 significant digits, no exponent for the usual sizes. */
export function fmtScore(v: number, digits = 2): string {
  if (v === 0) return '0'
  const a = Math.abs(v)
  if (a >= 1e-6 && a < 1e6) return String(Number(v.toPrecision(digits)))
  return v.toExponential(digits - 1)
}

/**
 * Chooses the suggested pool (module comment). `per` names the period for the slope text
 * ("month", "quarter", "year"; "period" otherwise).
 */
export function suggestPool(candidates: readonly SuggestionCandidate[], k = 20, per = 'period'): SuggestedPool {
  const size = Math.max(1, Math.floor(k))
  const usable = candidates.filter(c => !c.flagged && c.rmspeDemeaned !== null && Number.isFinite(c.rmspeDemeaned))
  const withSlope = usable.filter(c => c.slopeDiff !== null && Number.isFinite(c.slopeDiff))
  const empty = (note: string): SuggestedPool => ({ pool: [], reasons: new Map(), slopeLimit: null, eligible: 0, passed: 0, rule: note, note })
  if (!usable.length) {
    return empty(candidates.length ? 'No candidate can be suggested: every one is flagged or lacks pre-period scores.' : 'No candidate to suggest.')
  }
  const byFit = (a: SuggestionCandidate, b: SuggestionCandidate) =>
    a.rmspeDemeaned! - b.rmspeDemeaned! || Math.abs(a.slopeDiff ?? 0) - Math.abs(b.slopeDiff ?? 0) || (a.unit < b.unit ? -1 : a.unit > b.unit ? 1 : 0)

  // a single pre-period (or none with a slope): demeaned fit alone, said so
  if (!withSlope.length) {
    const chosen = [...usable].sort(byFit).slice(0, size)
    const reasons = new Map(chosen.map((c, i) => [c.unit, `close pre-period fit: demeaned RMSPE ${fmtScore(c.rmspeDemeaned!, 3)}, rank ${i + 1} of ${usable.length} (no trend test: too few pre-periods for a slope)`]))
    const note = 'No slope difference could be computed (too few pre-periods), so the suggestion rests on the demeaned fit alone and cannot check trends.'
    return { pool: chosen.map(c => c.unit), reasons, slopeLimit: null, eligible: usable.length, passed: usable.length, rule: `The ${chosen.length} unflagged candidates with the smallest demeaned RMSPE. ${note}`, note }
  }

  const n = withSlope.length
  const abs = withSlope.map(c => Math.abs(c.slopeDiff!)).sort((a, b) => a - b)
  const keep = Math.min(n, Math.max(size, Math.ceil(n * TREND_SHARE)))
  const limit = abs[keep - 1]!
  const passed = withSlope.filter(c => Math.abs(c.slopeDiff!) <= limit).sort(byFit)
  const chosen = passed.slice(0, size)
  const reasons = new Map<string, string>()
  chosen.forEach((c, i) => {
    reasons.set(c.unit,
      `tracks the treated unit's pre-period trend: slope difference ${fmtScore(c.slopeDiff!)} per ${per} `
      + `(limit ${fmtScore(limit)}); demeaned RMSPE ${fmtScore(c.rmspeDemeaned!, 3)}, rank ${i + 1}`)
  })
  const share = keep === n ? 'every eligible candidate' : keep === size && size > Math.ceil(n * TREND_SHARE) ? `the ${size} closest in trend` : 'the closest third in trend'
  const rule = `Among the ${n} unflagged candidates, those whose pre-period slope is within ${fmtScore(limit)} per ${per} of the treated unit's (${share}: ${passed.length}), `
    + `then the ${chosen.length} with the smallest demeaned RMSPE. Overall fit alone would favour units that match the level but drift away in trend.`
  const dropped = usable.length - n
  return {
    pool: chosen.map(c => c.unit),
    reasons,
    slopeLimit: limit,
    eligible: n,
    passed: passed.length,
    rule,
    note: dropped ? `${dropped} unflagged candidate${dropped > 1 ? 's have' : ' has'} no slope difference and ${dropped > 1 ? 'are' : 'is'} not suggested.` : null,
  }
}

/** The former rule, kept for comparison: the k best unflagged by composite rank. */
export function suggestByCompositeRank(candidates: readonly (SuggestionCandidate & { rank: number | null })[], k = 10): string[] {
  return candidates.filter(c => !c.flagged && c.rank !== null)
    .sort((a, b) => a.rank! - b.rank! || (a.unit < b.unit ? -1 : 1))
    .slice(0, k).map(c => c.unit)
}
