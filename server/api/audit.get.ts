/**
 * GET /api/audit — admin: the audit log, newest first. Query: entity, entityId, user (id or
 * part of an e-mail), action (part of it), from / to (YYYY-MM-DD, inclusive), before (id, for
 * the next page), limit (1..500, default 100). Returns {rows, next, entities}.
 */
import { auditQuerySchema } from '#shared/schemas/audit'
import { searchAudit } from '../services/audit'

export default defineEventHandler(async (event) => {
  await requireUser(event, ADMIN)
  const query = await getValidatedQuery(event, check(auditQuerySchema, 'query'))
  return searchAudit(query)
})
