/**
 * The registry of the data side: jurisdictions, measures, sources and policy events.
 * One set of schemas for the forms in the browser and the routes on the server.
 */
import { z } from 'zod'
import { idParams } from './ids'
import { parsePeriod, PeriodError } from '../utils/periods'

const trimmed = (what: string, max = 200) => z.string().trim().min(1, `Enter ${what}.`).max(max, `Keep ${what} under ${max} characters.`)
const optionalText = (max = 2000) => z.string().trim().max(max).optional().nullable()
  .transform(v => (v === '' || v == null ? null : v))

export const jurisdictionCodeSchema = z.string().trim()
  .min(1, 'Enter a code.')
  .max(40, 'Keep codes to 40 characters.')
  .regex(/^[A-Za-z0-9][A-Za-z0-9._-]*$/, 'Codes use letters, digits, ".", "_" and "-", starting with a letter or digit.')

export const measureKeySchema = z.string().trim()
  .min(1, 'Enter a key.')
  .max(60, 'Keep keys to 60 characters.')
  .regex(/^[a-z][a-z0-9_]*$/, 'Keys use lower-case letters, digits and "_", starting with a letter.')

/** Free attributes of a jurisdiction: short names with text, number or yes/no values. */
export const attributesSchema = z.record(
  z.string().trim().min(1).max(60),
  z.union([z.string().max(500), z.number(), z.boolean(), z.null()]),
)

export const jurisdictionCreateSchema = z.strictObject({
  code: jurisdictionCodeSchema,
  name: trimmed('a name'),
  kind: trimmed('a kind (for example municipality, county, state)', 60),
  region: optionalText(120),
  attributes: attributesSchema.optional().default({}),
  neighbours: z.array(jurisdictionCodeSchema).max(500).optional().default([]),
})
export type JurisdictionCreate = z.input<typeof jurisdictionCreateSchema>

export const jurisdictionPatchSchema = z.strictObject({
  name: trimmed('a name').optional(),
  kind: trimmed('a kind', 60).optional(),
  region: optionalText(120),
  attributes: attributesSchema.optional(),
  neighbours: z.array(jurisdictionCodeSchema).max(500).optional(),
}).refine(v => Object.values(v).some(x => x !== undefined), { message: 'Nothing to change.' })

export const codeParamSchema = z.object({ code: jurisdictionCodeSchema })

export const MEASURE_KINDS = ['outcome', 'covariate', 'denominator'] as const
export const MEASURE_FREQUENCIES = ['year', 'quarter', 'month', 'week', 'day'] as const
export type MeasureFrequency = typeof MEASURE_FREQUENCIES[number]

export const measureCreateSchema = z.strictObject({
  key: measureKeySchema,
  label: trimmed('a label'),
  unit: trimmed('a unit (for example "filings per 1,000 renter households")', 120),
  kind: z.enum(MEASURE_KINDS, { message: 'Kind is outcome, covariate or denominator.' }),
  frequency: z.enum(MEASURE_FREQUENCIES, { message: 'Frequency is year, quarter, month, week or day.' }),
})
export type MeasureCreate = z.input<typeof measureCreateSchema>

export const sourceCreateSchema = z.strictObject({
  name: trimmed('a name'),
  publisher: trimmed('the publisher'),
  url: z.string().trim().max(1000).optional().nullable()
    .transform(v => (v === '' || v == null ? null : v))
    .refine(v => v == null || /^https?:\/\/\S+$/.test(v), { message: 'Enter a link starting with http:// or https://.' }),
  licence: optionalText(200),
  notes: optionalText(),
})
export type SourceCreate = z.input<typeof sourceCreateSchema>

export const idParamSchema = idParams('id')

/** A period in any form periods.ts reads; kept in its canonical form. */
export const periodSchema = z.union([z.string(), z.number()]).transform((v, ctx) => {
  try {
    return parsePeriod(v).canonical
  }
  catch (e) {
    ctx.addIssue({ code: 'custom', message: e instanceof PeriodError ? e.message.replace(/^parsePeriod: /, '') : 'Not a period.' })
    return z.NEVER
  }
})

export const POLICY_EVENT_KINDS = ['adoption', 'strengthening', 'repeal'] as const

export const policyEventCreateSchema = z.strictObject({
  jurisdiction: jurisdictionCodeSchema,
  period: periodSchema,
  kind: z.enum(POLICY_EVENT_KINDS, { message: 'Kind is adoption, strengthening or repeal.' }),
  policy: z.string().trim().min(1, 'Enter a policy key, so related events can be found together.').max(80)
    .regex(/^[a-z0-9][a-z0-9_-]*$/, 'Policy keys use lower-case letters, digits, "_" and "-".'),
  label: trimmed('a label'),
  notes: optionalText(),
})
export type PolicyEventCreate = z.input<typeof policyEventCreateSchema>

export const policyEventQuerySchema = z.object({
  jurisdiction: jurisdictionCodeSchema.optional(),
  policy: z.string().trim().max(80).optional(),
})
