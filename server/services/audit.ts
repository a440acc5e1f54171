/** Reading the audit log for the admin viewer: newest first, filtered, paged by id. */
import { and, desc, eq, ilike, lt, sql, type SQL } from 'drizzle-orm'
import { auditLog, users } from '~~/db/schema'
import type { AuditQuery } from '#shared/schemas/audit'

export async function searchAudit(q: AuditQuery) {
  const where: SQL[] = []
  if (q.entity) where.push(eq(auditLog.entity, q.entity))
  if (q.entityId) where.push(eq(auditLog.entityId, q.entityId))
  if (q.action) where.push(ilike(auditLog.action, `%${q.action.replace(/[%_\\]/g, m => `\\${m}`)}%`))
  if (q.user) {
    where.push(/^\d+$/.test(q.user) ? eq(auditLog.userId, Number(q.user)) : ilike(users.email, `%${q.user.replace(/[%_\\]/g, m => `\\${m}`)}%`))
  }
  if (q.from) where.push(sql`${auditLog.at} >= ${q.from}::date`)
  if (q.to) where.push(sql`${auditLog.at} < ${q.to}::date + 1`)
  if (q.before) where.push(lt(auditLog.id, q.before))
  const rows = await useDb().select({
    id: auditLog.id, at: auditLog.at, action: auditLog.action, entity: auditLog.entity, entityId: auditLog.entityId,
    before: auditLog.before, after: auditLog.after, userId: auditLog.userId, userEmail: users.email, userName: users.name,
  }).from(auditLog).leftJoin(users, eq(users.id, auditLog.userId))
    .where(where.length ? and(...where) : undefined)
    .orderBy(desc(auditLog.id)).limit(q.limit + 1)
  const more = rows.length > q.limit
  const page = more ? rows.slice(0, q.limit) : rows
  const entities = await useDb().selectDistinct({ entity: auditLog.entity }).from(auditLog).orderBy(auditLog.entity)
  return { rows: page, next: more ? page[page.length - 1]!.id : null, entities: entities.map(e => e.entity) }
}
