/** GET /api/audit filters: entity (and its id), who (user id or part of the e-mail), action, a date range, and paging by id. */
import { z } from 'zod'

const optionalText = z.string().trim().max(200).optional().transform(v => v || undefined)
const day = z.string().trim().regex(/^\d{4}-\d{2}-\d{2}$/, 'Give a date as YYYY-MM-DD.').optional().or(z.literal('').transform(() => undefined))

export const auditQuerySchema = z.strictObject({
  entity: optionalText,
  entityId: optionalText,
  user: optionalText,
  action: optionalText,
  from: day,
  to: day,
  before: z.coerce.number().int().positive().max(Number.MAX_SAFE_INTEGER).optional(), // audit ids are 64-bit
  limit: z.coerce.number().int().min(1).max(500).default(100),
}).refine(q => !q.from || !q.to || q.from <= q.to, { message: 'from comes after to.', path: ['from'] })
export type AuditQuery = z.output<typeof auditQuerySchema>
