/** The audit log: every change says who, what, when, and the row before and after. */
import { auditLog } from '~~/db/schema'
import type { Db } from './db'

export interface AuditEntry {
  userId: number | null
  action: string
  entity: string
  entityId?: string | number | null
  before?: unknown
  after?: unknown
}

export async function audit(db: Pick<Db, 'insert'>, entry: AuditEntry): Promise<void> {
  await db.insert(auditLog).values({
    userId: entry.userId,
    action: entry.action,
    entity: entry.entity,
    entityId: entry.entityId == null ? null : String(entry.entityId),
    before: entry.before ?? null,
    after: entry.after ?? null,
  })
}
