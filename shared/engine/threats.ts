/**
 * Computed evidence on the threats to validity (server/engine/threats/): for each threat a
 * verdict in plain words, the figure behind it, one line of explanation, the rule that gave
 * the verdict, and where to look (a small chart's values and a link to a workspace step).
 * The evidence is a starting point; the analyst writes the assessment.
 */
export type Verdict = 'supports' | 'weakens' | 'unclear'

export const VERDICT_WORDS: Record<Verdict, string> = {
  supports: 'supports the estimate',
  weakens: 'weakens the estimate',
  unclear: 'cannot tell',
}

/** Values for a small strip chart: one dot per comparison value, the study's own value marked. */
export interface EvidenceStrip {
  /** What each dot is ("effect at a fake start date"). */
  label: string
  values: number[]
  /** The study's value, drawn as a marker ("effect at the real start"). */
  marked: number | null
  markedLabel: string
}

export interface ThreatEvidence {
  threat: 'history' | 'maturation' | 'testing' | 'instrumentation' | 'regression_to_mean' | 'selection' | 'diffusion'
  verdict: Verdict
  /** The figure behind the verdict, in words with its number ("2 of 58 fake dates (3%) ..."). */
  figure: string
  /** One line on what the figure means. */
  explanation: string
  /** The verdict rule, in words (and whether it is common practice). */
  rule: string
  /** The numbers themselves, by name, for the workbook and programs. */
  figures: Record<string, number | null>
  strip: EvidenceStrip | null
  /** Where the chart behind it is: a workspace step and an anchor on it. */
  link: { step: 'trends' | 'estimates' | 'pool', anchor: string, label: string } | null
}
