/** The Trends step's query: the event study's window, in periods from the start (both or neither). */
import { z } from 'zod'

const periodsFromStart = (what: string) => z.coerce.number({ message: `${what} is a whole number of periods.` }).int(`${what} is a whole number of periods.`).min(-60, `${what} is at least -60.`).max(60, `${what} is at most 60.`)

export const trendsQuerySchema = z.object({
  from: periodsFromStart('from').optional(),
  to: periodsFromStart('to').optional(),
}).refine(q => (q.from === undefined) === (q.to === undefined), { message: 'Give both ends of the event window (from and to), or neither.', path: ['to'] })
  .refine(q => q.from === undefined || q.from <= -2, { message: 'The window must start at least 2 periods before the start (from -2 or earlier): -1 is the reference period.', path: ['from'] })
  .refine(q => q.to === undefined || q.to >= 0, { message: 'The window must reach the start itself (to 0 or later).', path: ['to'] })

export type TrendsQuery = z.output<typeof trendsQuerySchema>
