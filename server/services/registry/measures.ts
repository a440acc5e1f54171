/** Measures: what is recorded (key, label, unit), its role in a study (kind) and its frequency. */
import { asc, eq } from 'drizzle-orm'
import type { RegistryListQuery } from '#shared/schemas/archive'
import { archivedFilter } from './archive'
import type { z } from 'zod'
import { measures } from '~~/db/schema'
import type { measureCreateSchema } from '#shared/schemas/registry'
import type { Db } from '../../utils/db'

const publicColumns = { key: measures.key, label: measures.label, unit: measures.unit, kind: measures.kind, frequency: measures.frequency, archivedAt: measures.archivedAt, createdAt: measures.createdAt }

/** Current measures; `archived: 'include'` adds the archived ones (the registry page), `'only'` lists just those. */
export async function listMeasures(db: Db, query: RegistryListQuery = {}) {
  return db.select(publicColumns).from(measures).where(archivedFilter(measures.archivedAt, query)).orderBy(asc(measures.key))
}

export async function findMeasure(db: Db, key: string) {
  const [row] = await db.select({ id: measures.id, ...publicColumns }).from(measures).where(eq(measures.key, key))
  if (!row) throw createError({ statusCode: 404, message: `No measure with key "${key}".` })
  return row
}

export async function createMeasure(db: Db, userId: number, body: z.output<typeof measureCreateSchema>) {
  return db.transaction(async (tx) => {
    const [existing] = await tx.select({ id: measures.id }).from(measures).where(eq(measures.key, body.key))
    if (existing) throw createError({ statusCode: 409, message: `A measure with key "${body.key}" already exists.` })
    const [row] = await tx.insert(measures).values(body).returning(publicColumns)
    await audit(tx, { userId, action: 'create', entity: 'measure', entityId: body.key, after: row })
    return row!
  })
}
