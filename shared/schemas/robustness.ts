/** Requests of the Robustness step (POST /api/studies/:id/robustness and its cancel route). */
import { z } from 'zod'
import { ROBUSTNESS_KINDS } from '../engine/robustness'

export const robustnessStartSchema = z.strictObject({
  /** The run to check; the study's newest run when absent. */
  runId: z.number({ message: 'runId is a run id (a whole number).' }).int().positive({ message: 'runId is a positive whole number.' }).optional(),
  kinds: z.array(z.enum(ROBUSTNESS_KINDS, { message: `Each check is one of ${ROBUSTNESS_KINDS.join(', ')}.` }))
    .min(1, 'Choose at least one check.')
    .refine(k => new Set(k).size === k.length, 'Each check is listed once.')
    .default([...ROBUSTNESS_KINDS]),
  options: z.strictObject({
    /** Placebo in time: periods kept on each side of a fake start inside the pre-period. */
    minDistance: z.number({ message: 'minDistance is a number of periods.' }).int('minDistance is a whole number of periods.').min(1, 'minDistance: at least 1 period.').max(60, 'minDistance: at most 60 periods.').default(3),
  }).default({ minDistance: 3 }),
})
export type RobustnessStart = z.input<typeof robustnessStartSchema>

export const robustnessParamSchema = z.object({
  id: z.coerce.number().int().positive({ message: 'The study id is a positive whole number.' }),
  runId: z.coerce.number().int().positive({ message: 'The robustness run id is a positive whole number.' }),
})
