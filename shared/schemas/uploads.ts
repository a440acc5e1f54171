/**
 * How an uploaded file maps onto the panel (DESIGN.md "Payloads"), and the panel read query.
 *
 * Long layout, one value column per measure:
 *   {layout: "long", jurisdiction: COL, period: COL, values: {COL: measureKey}}
 * Long layout, measure named in a column:
 *   {layout: "long", jurisdiction: COL, period: COL, measure: COL, value: COL}
 * Wide layout, one column per period:
 *   {layout: "wide", jurisdiction: COL, measure: measureKey}
 * Optional everywhere: delimiter (CSV; "auto" by default), sheet (XLSX; the first by default),
 * missing (cell texts read as "no value", besides the empty cell), ignore (wide: columns that
 * are not periods), label (the release's name), rates (derived measures computed on import).
 */
import { z } from 'zod'
import { jurisdictionCodeSchema, measureKeySchema, periodSchema } from './registry'

const column = z.string().trim().min(1, 'Name a column.').max(200)

export const DELIMITERS = ['auto', ',', ';', '\t', '|'] as const

export const rateSchema = z.strictObject({
  key: measureKeySchema,
  count: measureKeySchema,
  denominator: measureKeySchema,
  per: z.union([z.literal(1000), z.literal(100000)], { message: 'Rates are per 1,000 or per 100,000.' }),
  label: z.string().trim().max(200).optional(),
})
export type RateRequest = z.infer<typeof rateSchema>

const common = {
  delimiter: z.enum(DELIMITERS).optional().default('auto'),
  sheet: z.string().trim().max(200).optional(),
  missing: z.array(z.string().max(20)).max(20).optional().default([]),
  label: z.string().trim().max(200).optional(),
  rates: z.array(rateSchema).max(10).optional().default([]),
}

export const longValuesMappingSchema = z.strictObject({
  layout: z.literal('long'),
  jurisdiction: column,
  period: column,
  values: z.record(column, measureKeySchema).refine(v => Object.keys(v).length > 0, { message: 'Map at least one value column to a measure.' }),
  ...common,
})

export const longMeasureMappingSchema = z.strictObject({
  layout: z.literal('long'),
  jurisdiction: column,
  period: column,
  measure: column,
  value: column,
  ...common,
})

export const wideMappingSchema = z.strictObject({
  layout: z.literal('wide'),
  jurisdiction: column,
  measure: measureKeySchema,
  ignore: z.array(column).max(200).optional().default([]),
  ...common,
})

export const mappingSchema = z.union([longValuesMappingSchema, longMeasureMappingSchema, wideMappingSchema], {
  error: 'The mapping is {layout: "long", jurisdiction, period, values: {column: measure}}, {layout: "long", jurisdiction, period, measure, value} or {layout: "wide", jurisdiction, measure}.',
})
export type Mapping = z.output<typeof mappingSchema>
export type MappingInput = z.input<typeof mappingSchema>

/** One problem found in a file: row as a spreadsheet numbers it (the header is row 1). */
export interface UploadProblem { row: number | null, column: string | null, problem: string }

const commaList = z.string().trim().optional()
  .transform(v => (v ? v.split(',').map(s => s.trim()).filter(Boolean) : []))

export const panelQuerySchema = z.object({
  measure: measureKeySchema,
  units: commaList.pipe(z.array(jurisdictionCodeSchema).max(5000, 'Ask for at most 5,000 jurisdictions at once.')),
  from: periodSchema.optional(),
  to: periodSchema.optional(),
  format: z.enum(['json', 'csv']).optional().default('json'),
  /** Read only these releases (newest of them per cell): the releases a study run used. */
  release: commaList.pipe(z.array(z.string().regex(/^\d+$/, 'Release ids are positive whole numbers.').transform(Number)).max(100)),
  /** Read the panel as it was at this moment: releases imported at or before it. */
  asOf: z.iso.datetime({ offset: true, message: 'asOf is an ISO date-time, e.g. 2024-06-30T12:00:00Z.' }).optional(),
})
export type PanelQuery = z.output<typeof panelQuerySchema>

export interface PanelRow { jurisdiction: string, period: string, value: number }
export interface PanelResponse {
  measure: string
  label: string
  unit: string
  frequency: string
  rows: PanelRow[]
  releases: { id: number, source: string, label: string | null, importedAt: string | null }[]
}

export const jobParamSchema = z.object({ id: z.uuid({ message: 'A job id is a UUID.' }) })

export { jurisdictionCodeSchema, periodSchema }
