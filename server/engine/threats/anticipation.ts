/**
 * Testing and anticipation: did the outcome move before the start (people reacting to the
 * announcement, to being measured, or to the debate)? Read from the event study's lead
 * coefficients (designs/eventStudy.ts) and their joint test (wald.ts), or the lead test by
 * placebo units where the engine ran one (inference/permutation.ts): with few treated units
 * the clustered F test's p-value is unreliable, so the placebo p is preferred and the F test
 * is used only when the caller says it is reliable.
 *
 * Figures: the leads nearest the start (up to the last three before the reference period)
 * and the joint p. Verdict: "weakens" when p < 0.05 (the leads are jointly different from
 * zero: the outcome moved before the start); "supports" when p >= 0.05; "cannot tell" without
 * a dependable test. A test with few periods or units has little power: the text says so.
 */
import type { EventStudyPoint } from '../../../shared/engine/result'
import type { ThreatEvidence } from '../../../shared/engine/threats'
import { num } from './basics'

export interface LeadInput {
  points: EventStudyPoint[] | null
  /** Joint p by placebo units (preferred), or null. */
  placeboP: number | null
  /** The clustered F test's p, with whether it can be relied on here. */
  waldP: number | null
  waldReliable: boolean
}

const pText = (p: number) => (p < 0.001 ? 'p < 0.001' : `p = ${p.toFixed(3)}`)

export function anticipationEvidence(x: LeadInput): ThreatEvidence {
  const leads = (x.points ?? []).filter(p => p.relTime < 0 && !p.reference).sort((a, b) => a.relTime - b.relTime)
  const near = leads.slice(-3)
  const p = x.placeboP ?? (x.waldReliable ? x.waldP : null)
  const source = x.placeboP !== null ? 'by placebo units' : 'by the clustered F test'
  const verdict = p === null || !leads.length ? 'unclear' : p < 0.05 ? 'weakens' : 'supports'
  const nearText = near.map(l => `${-l.relTime} before: ${num(l.estimate)}`).join(', ')
  return {
    threat: 'testing',
    verdict,
    figure: !leads.length
      ? 'The event study has no lead coefficients to read.'
      : `Lead coefficients nearest the start (periods before it) ${nearText}; joint test ${p === null ? 'not dependable here' : `${pText(p)} ${source}`}.`,
    explanation: verdict === 'weakens'
      ? 'The outcome already moved before the start: anticipation, a reaction to measurement, or diverging trends; the estimate may include it.'
      : verdict === 'supports'
        ? 'No clear movement before the start; with few periods or units this test has little power, so it is consistent with no anticipation rather than proof of it.'
        : 'There is no dependable joint test of the leads here; look at the lead coefficients in the chart.',
    rule: 'Weakens when the joint test of the leads gives p < 0.05; supports when p >= 0.05; cannot tell without a dependable test (the placebo-unit test is used when it exists, the clustered F test only with many clusters).',
    figures: { leads: leads.length, jointP: p, nearestLead: near.at(-1)?.estimate ?? null },
    strip: leads.length ? { label: 'lead coefficient', values: leads.map(l => l.estimate), marked: 0, markedLabel: 'zero (no movement)' } : null,
    link: { step: 'trends', anchor: 'lead-test', label: 'Lead test and event study on the Trends step' },
  }
}
