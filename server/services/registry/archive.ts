/**
 * Archiving a measure, source or jurisdiction (admin): archived_at is set or cleared, in one
 * transaction with its audit entry. Nothing is deleted: studies that use it keep it, and
 * the registry pages show it under "show archived"; pickers and new studies' candidates do not.
 */
import { type SQL, eq, isNotNull, isNull } from 'drizzle-orm'
import { jurisdictions, measures, sources } from '~~/db/schema'
import type { RegistryListQuery } from '#shared/schemas/archive'
import type { Db } from '../../utils/db'

const TABLES = {
  measure: { table: measures, column: measures.key, archivedAt: measures.archivedAt, name: (k: string) => `measure "${k}"` },
  source: { table: sources, column: sources.id, archivedAt: sources.archivedAt, name: (k: string) => `source ${k}` },
  jurisdiction: { table: jurisdictions, column: jurisdictions.code, archivedAt: jurisdictions.archivedAt, name: (k: string) => `jurisdiction "${k}"` },
} as const

export type ArchivableEntity = keyof typeof TABLES

/** The list filter for a registry read: current entries only unless asked otherwise. */
export function archivedFilter(archivedAt: typeof measures.archivedAt | typeof sources.archivedAt | typeof jurisdictions.archivedAt, query: RegistryListQuery = {}): SQL | undefined {
  if (query.archived === 'include') return undefined
  return query.archived === 'only' ? isNotNull(archivedAt) : isNull(archivedAt)
}

export async function setArchived(db: Db, userId: number, entity: ArchivableEntity, key: string | number, archived: boolean) {
  const t = TABLES[entity]
  return db.transaction(async (tx) => {
    const [row] = await tx.select({ archivedAt: t.archivedAt }).from(t.table).where(eq(t.column, key as never))
    if (!row) throw createError({ statusCode: 404, message: `No ${t.name(String(key))}.` })
    if (archived === (row.archivedAt !== null)) {
      throw createError({ statusCode: 409, message: `The ${t.name(String(key))} is ${archived ? 'already archived' : 'not archived'}.` })
    }
    const archivedAt = archived ? new Date() : null
    await tx.update(t.table).set({ archivedAt }).where(eq(t.column, key as never))
    await audit(tx, { userId, action: archived ? 'archive' : 'unarchive', entity, entityId: String(key), before: { archivedAt: row.archivedAt }, after: { archivedAt } })
    return { [entity === 'source' ? 'id' : entity === 'measure' ? 'key' : 'code']: key, archivedAt }
  })
}
