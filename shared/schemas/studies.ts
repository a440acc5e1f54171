/**
 * Studies: the create and edit payloads, pool decisions and run requests, shared by the
 * forms in the browser and the routes on the server. Field names follow DESIGN.md
 * ("Payloads of the main routes").
 */
import { z } from 'zod'
import { idParams, recordId } from './ids'
import { availableDesigns, eventWindowSchema, inferenceSchema, itsOptionsSchema, smallSampleChoices } from '../engine/spec'
import type { DonorExclusion, DonorScoreRow } from '../engine/result'
import { comparePeriods } from '../utils/periods'
import { jurisdictionCodeSchema, measureKeySchema, periodSchema } from './registry'

export const STUDY_STATUSES = ['draft', 'in_review', 'approved', 'archived'] as const
export type StudyStatus = typeof STUDY_STATUSES[number]
export const STUDY_STATUS_LABELS: Record<StudyStatus, string> = {
  draft: 'Draft',
  in_review: 'In review',
  approved: 'Approved',
  archived: 'Archived',
}
export const TRANSFORMS = ['level', 'log', 'rate'] as const
export const TRANSFORM_LABELS: Record<typeof TRANSFORMS[number], string> = {
  level: 'Level (as recorded)',
  log: 'Natural log',
  rate: 'Rate (outcome per 1,000 of the denominator)',
}
export const RUN_DESIGNS = availableDesigns
export type RunDesign = typeof RUN_DESIGNS[number]
export const DESIGN_LABELS: Record<RunDesign, string> = {
  pre_post: 'Before and after (treated only, weak)',
  its: 'Interrupted time series',
  did: 'Difference-in-differences',
  event_study: 'Event study',
  synthetic: 'Weighted comparison (synthetic control)',
  staggered: 'Adoption at different times (group-time effects)',
}

const text = (what: string, max: number) => z.string().trim().min(1, `Enter ${what}.`).max(max, `Keep ${what} under ${max} characters.`)

const interventionSchema = z.strictObject({
  jurisdiction: jurisdictionCodeSchema,
  period: periodSchema,
  label: text('a label for the intervention', 200),
})

export const studyWindowSchema = z.strictObject({
  pre: z.tuple([periodSchema, periodSchema]),
  post: z.tuple([periodSchema, periodSchema]),
}).superRefine((w, ctx) => {
  const order = (a: string, b: string) => { try { return comparePeriods(a, b) } catch { return Number.NaN } }
  if (!(order(w.pre[0], w.pre[1]) <= 0)) ctx.addIssue({ code: 'custom', path: ['pre'], message: 'The pre-period must run forward (first period before last) in one frequency.' })
  if (!(order(w.post[0], w.post[1]) <= 0)) ctx.addIssue({ code: 'custom', path: ['post'], message: 'The post-period must run forward (first period before last) in one frequency.' })
  if (!(order(w.pre[1], w.post[0]) < 0)) ctx.addIssue({ code: 'custom', path: ['post'], message: 'The post-period must begin after the pre-period ends.' })
})

const studyFields = {
  title: text('a title', 200),
  question: z.string().trim().max(4000, 'Keep the question under 4,000 characters.').optional().nullable().transform(v => (v ? v : null)),
  outcome: measureKeySchema,
  transform: z.enum(TRANSFORMS, { message: 'Transform is level, log or rate.' }).default('level'),
  denominator: measureKeySchema.optional().nullable().transform(v => v ?? null),
  treated: z.array(jurisdictionCodeSchema).min(1, 'Name at least one treated jurisdiction.').max(200),
  start: z.union([periodSchema, z.record(jurisdictionCodeSchema, periodSchema)], { message: 'Give the first treated period, or one per treated jurisdiction as {code: period}.' }),
  interventions: z.array(interventionSchema).max(500).default([]),
  window: studyWindowSchema.optional().nullable().transform(v => v ?? null),
  covariates: z.array(measureKeySchema).max(30).default([]),
}

type StudyShape = { treated?: string[], start?: string | Record<string, string>, transform?: string, denominator?: string | null, covariates?: string[], outcome?: string }

/** Cross-field rules, for create and for the result of an edit. */
export function refineStudy(s: StudyShape, ctx: z.RefinementCtx) {
  const treated = s.treated ?? []
  const dup = treated.find((c, i) => treated.indexOf(c) !== i)
  if (dup) ctx.addIssue({ code: 'custom', path: ['treated'], message: `"${dup}" is listed twice.` })
  if (s.start && typeof s.start === 'object') {
    for (const code of treated) if (!(code in s.start)) ctx.addIssue({ code: 'custom', path: ['start', code], message: `Give the start for ${code}.` })
    for (const code of Object.keys(s.start)) if (!treated.includes(code)) ctx.addIssue({ code: 'custom', path: ['start', code], message: `${code} is not a treated jurisdiction.` })
  }
  if (s.transform === 'rate' && !s.denominator) ctx.addIssue({ code: 'custom', path: ['denominator'], message: 'A rate needs a denominator measure.' })
  if (s.covariates?.includes(s.outcome ?? '')) ctx.addIssue({ code: 'custom', path: ['covariates'], message: 'The outcome cannot also be a covariate.' })
  const cdup = s.covariates?.find((c, i) => s.covariates!.indexOf(c) !== i)
  if (cdup) ctx.addIssue({ code: 'custom', path: ['covariates'], message: `"${cdup}" is listed twice.` })
}

export const studyCreateSchema = z.strictObject(studyFields).superRefine(refineStudy)
export type StudyCreate = z.input<typeof studyCreateSchema>
export type StudyCreateParsed = z.output<typeof studyCreateSchema>

export const studyPatchSchema = z.strictObject({
  title: studyFields.title.optional(),
  question: studyFields.question,
  outcome: studyFields.outcome.optional(),
  transform: z.enum(TRANSFORMS).optional(),
  denominator: measureKeySchema.optional().nullable(),
  treated: studyFields.treated.optional(),
  start: studyFields.start.optional(),
  interventions: z.array(interventionSchema).max(500).optional(),
  window: studyWindowSchema.optional().nullable(),
  covariates: z.array(measureKeySchema).max(30).optional(),
  status: z.enum(['draft', 'archived'], { message: 'Here a study can only go back to draft or be archived; review decides the rest.' }).optional(),
}).refine(v => Object.values(v).some(x => x !== undefined), { message: 'Nothing to change.' })
export type StudyPatch = z.input<typeof studyPatchSchema>

export const studyListQuerySchema = z.object({
  status: z.enum(STUDY_STATUSES, { message: `status is one of ${STUDY_STATUSES.join(', ')}.` }).optional(),
  mine: z.enum(['1', 'true']).optional(),
  /** The owner's user id. */
  owner: z.coerce.number({ message: 'owner is a user id (a positive whole number).' }).int('owner is a user id (a positive whole number).').positive('owner is a user id (a positive whole number).').optional(),
  /** The outcome measure's key. */
  outcome: measureKeySchema.optional(),
})

export const studyIdParamSchema = idParams('study id')
export const runParamSchema = z.object({
  id: recordId('study id'),
  runId: recordId('run id'),
})

/**
 * How many donors the Pool step suggests: 20, because placebo units can bound a 95% interval only
 * with at least 19 comparison units (the smallest p is 1/(placebos + 1)), and one more keeps a
 * pool for each of them.
 */
export const SUGGESTED_POOL_SIZE = 20

/** Candidates: how many to suggest, and the missing-data threshold for the automatic flag. */
export const candidatesQuerySchema = z.object({
  k: z.coerce.number().int().min(1).max(500).default(SUGGESTED_POOL_SIZE),
  maxMissing: z.coerce.number().min(0).max(1).default(0.2),
})

export const poolPutSchema = z.strictObject({
  decisions: z.array(z.strictObject({
    jurisdiction: jurisdictionCodeSchema,
    included: z.boolean({ message: 'included is true or false.' }),
    reason: z.string().trim().max(1000).optional().nullable().transform(v => (v ? v : null)),
  }).superRefine((d, ctx) => {
    if (!d.included && d.reason === null) ctx.addIssue({ code: 'custom', path: ['reason'], message: `Excluding a jurisdiction needs a reason: say why ${d.jurisdiction} is left out of the pool.` })
  }))
    .min(1, 'Send at least one decision.').max(5000),
})
export type PoolPut = z.input<typeof poolPutSchema>

/** The engine spec's other keys a run may set (the study fixes outcome, units, dates and window). */
export const runOptionsSchema = z.strictObject({
  eventWindow: eventWindowSchema.optional(),
  did: z.strictObject({ form: z.enum(['twfe', '2x2']).default('twfe'), phases: z.array(periodSchema).max(20).optional() }).optional(),
  its: itsOptionsSchema.optional(),
  inference: inferenceSchema.optional(),
  synthetic: z.strictObject({ covariates: z.array(measureKeySchema).max(30).default([]) }).optional(),
  /** Estimate each later intervention of the treated jurisdiction separately (its breaks, did phases). */
  interventions: z.enum(['first', 'each']).optional(),
  fixedEffects: z.enum(['two-way', 'unit']).optional(),
  cluster: z.enum(['unit', 'none']).optional(),
  smallSample: z.enum(smallSampleChoices).optional(),
}, { error: (i: { code?: string, keys?: string[] }) => (i.code === 'unrecognized_keys' ? `unknown option${i.keys!.length > 1 ? 's' : ''} ${i.keys!.map(k => `"${k}"`).join(', ')}` : undefined) })

export const runCreateSchema = z.strictObject({
  design: z.enum(RUN_DESIGNS, { message: `Design is one of ${RUN_DESIGNS.join(', ')}.` }),
  options: runOptionsSchema.optional().default({}),
})
export type RunCreate = z.input<typeof runCreateSchema>

/** The cautions that stand beside every estimate (DESIGN.md, "Quality bars"). */
export const ESTIMATE_CAUTIONS = [
  'These are observational estimates. They rest on assumptions the data cannot prove: that treated and comparison units would have moved in parallel without the policy, that the policy did not spill over to the comparison units, and that nobody changed behaviour in anticipation of it.',
  'With few treated units or few clusters, standard errors, intervals and p-values can be unreliable; treat them as rough.',
  'Small counts may need suppression or rounding under your agency\'s disclosure rules before anything is published.',
  'Follow your agency\'s evaluation standards, and have the study reviewed by a qualified person before a decision rests on it.',
] as const

/** A donor candidate as the Pool step shows it: the engine's scores, flags and the decision. */
export interface PoolRow extends Omit<DonorScoreRow, 'unit' | 'exclusions'> {
  jurisdiction: string
  name: string
  kind: string
  region: string | null
  exclusions: DonorExclusion[]
  flagged: boolean
  included: boolean
  /** The analyst's saved decision, if any (otherwise `included` follows the suggestion). */
  decided: boolean
  reason: string | null
  suggested: boolean
  /** Why the unit is in the suggested pool, in plain words (null when it is not suggested). */
  suggestedReason: string | null
  /**
   * Its weight in the weighted comparison fitted on the pre-period against every unflagged
   * candidate (0 to 1, the weights sum to 1); null for flagged candidates, candidates left out
   * of the fit, or when no weights can be fitted.
   */
  weight: number | null
}
