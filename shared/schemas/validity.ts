/**
 * The validity record of a study (DESIGN.md step 7): for each threat an assessment
 * (addressed, partly, open), a note and links to the evidence (a run, a chart, a document).
 * PUT /api/studies/:id/validity sends the threats it changes; the others stay as they are.
 */
import { z } from 'zod'

export const THREATS = [
  { key: 'history', label: 'History', prompt: 'Did something else happen to the treated units around the start (another policy, an economic shock, a change in enforcement)?' },
  { key: 'maturation', label: 'Maturation', prompt: 'Would the outcome have drifted anyway (long-run trends, ageing, seasonal cycles) in a way the comparison units do not share?' },
  { key: 'testing', label: 'Testing', prompt: 'Did measuring or publicising the outcome itself change behaviour?' },
  { key: 'instrumentation', label: 'Instrumentation', prompt: 'Did the way the outcome is counted, coded or reported change over the study period?' },
  { key: 'regression_to_mean', label: 'Regression to the mean', prompt: 'Was the policy adopted because the outcome was unusually high or low just before?' },
  { key: 'selection', label: 'Selection', prompt: 'Do the treated units differ from the comparison units in ways that change their trends?' },
  { key: 'diffusion', label: 'Diffusion or spillover', prompt: 'Could the policy have reached the comparison units (neighbours, shared markets, imitation)?' },
] as const

export type ThreatKey = typeof THREATS[number]['key']
export const threatKeys = THREATS.map(t => t.key) as [ThreatKey, ...ThreatKey[]]
export const threatLabel = (key: string): string => THREATS.find(t => t.key === key)?.label ?? key

export const ASSESSMENTS = ['addressed', 'partly', 'open'] as const
export type Assessment = typeof ASSESSMENTS[number]
export const ASSESSMENT_LABELS: Record<Assessment, string> = {
  addressed: 'Addressed',
  partly: 'Partly addressed',
  open: 'Open',
}

export const EVIDENCE_KINDS = ['run', 'chart', 'document', 'link'] as const

export const evidenceSchema = z.strictObject({
  kind: z.enum(EVIDENCE_KINDS),
  ref: z.string().trim().min(1, 'Say what the evidence points to (a run id, a chart, an address).').max(500),
  label: z.string().trim().max(200).optional(),
})
export type Evidence = z.infer<typeof evidenceSchema>

export const validityNoteSchema = z.strictObject({
  threat: z.enum(threatKeys, { message: `Threat must be one of ${threatKeys.join(', ')}.` }),
  assessment: z.enum(ASSESSMENTS, { message: 'Assessment must be addressed, partly or open.' }),
  note: z.string().max(5000).default(''),
  evidence: z.array(evidenceSchema).max(20).default([]),
})
export type ValidityNoteInput = z.input<typeof validityNoteSchema>

export const validityPutSchema = z.strictObject({
  notes: z.array(validityNoteSchema).min(1, 'Send at least one threat.').max(threatKeys.length),
}).refine(v => new Set(v.notes.map(n => n.threat)).size === v.notes.length, { message: 'Each threat may appear once.', path: ['notes'] })

/** One threat as the record shows it: recorded (with who and when) or not yet. */
export interface ValidityEntry {
  threat: ThreatKey
  label: string
  prompt: string
  assessment: Assessment | null
  note: string
  evidence: Evidence[]
  updatedBy: string | null
  updatedAt: string | null
}

/** A threat being edited in the browser (assessment null until chosen). */
export interface ThreatDraft {
  threat: string
  label: string
  prompt: string
  assessment: Assessment | null
  note: string
  evidence: Evidence[]
}
