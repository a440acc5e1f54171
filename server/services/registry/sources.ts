/**
 * Data sources (provenance: publisher, link, licence, notes) and their releases.
 * Subqueries name the outer columns in full: drizzle would leave them unqualified there.
 */
import { asc, desc, eq, sql } from 'drizzle-orm'
import type { z } from 'zod'
import { sourceReleases, sources, users } from '~~/db/schema'
import type { sourceCreateSchema } from '#shared/schemas/registry'
import type { Db } from '../../utils/db'
import type { RegistryListQuery } from '#shared/schemas/archive'
import { archivedFilter } from './archive'

const sourceColumns = {
  id: sources.id,
  name: sources.name,
  publisher: sources.publisher,
  url: sources.url,
  licence: sources.licence,
  notes: sources.notes,
  archivedAt: sources.archivedAt,
  createdAt: sources.createdAt,
}

/** Current sources; `archived: 'include'` adds the archived ones, `'only'` lists just those. */
export async function listSources(db: Db, query: RegistryListQuery = {}) {
  return db.select({
    ...sourceColumns,
    releases: sql<number>`(select count(*)::int from source_releases r where r.source_id = "sources"."id" and r.status = 'done')`,
    lastImportedAt: sql<string | null>`(select max(r.imported_at) from source_releases r where r.source_id = "sources"."id" and r.status = 'done')`,
  }).from(sources).where(archivedFilter(sources.archivedAt, query)).orderBy(asc(sources.name))
}

export async function findSource(db: Db, id: number) {
  const [row] = await db.select(sourceColumns).from(sources).where(eq(sources.id, id))
  if (!row) throw createError({ statusCode: 404, message: `No source with id ${id}.` })
  return row
}

/** A source with every release, newest first (the file itself is not sent). */
export async function getSource(db: Db, id: number) {
  const source = await findSource(db, id)
  const releases = await db.select({
    id: sourceReleases.id,
    label: sourceReleases.label,
    fileName: sourceReleases.fileName,
    checksum: sourceReleases.checksum,
    sizeBytes: sourceReleases.sizeBytes,
    mapping: sourceReleases.mapping,
    status: sourceReleases.status,
    rowCount: sourceReleases.rowCount,
    errors: sourceReleases.errors,
    createdAt: sourceReleases.createdAt,
    importedAt: sourceReleases.importedAt,
    uploadedBy: users.name,
    jobId: sql<string | null>`(select j.id from jobs j where j.kind = 'import-release' and (j.result->>'releaseId')::int = "source_releases"."id" order by j.created_at desc limit 1)`,
  }).from(sourceReleases)
    .leftJoin(users, eq(users.id, sourceReleases.createdBy))
    .where(eq(sourceReleases.sourceId, id))
    .orderBy(desc(sourceReleases.id))
  return { ...source, releases }
}

export async function createSource(db: Db, userId: number, body: z.output<typeof sourceCreateSchema>) {
  return db.transaction(async (tx) => {
    const [row] = await tx.insert(sources).values({ ...body, createdBy: userId }).returning(sourceColumns)
    await audit(tx, { userId, action: 'create', entity: 'source', entityId: row!.id, after: row })
    return row!
  })
}
