/** The jurisdiction registry: codes, names, kinds, regions, free attributes, neighbour links (kept symmetric). */
import { and, asc, eq, inArray, or, sql } from 'drizzle-orm'
import { jurisdictionNeighbours, jurisdictions, observations, policyEvents } from '~~/db/schema'
import type { z } from 'zod'
import type { jurisdictionCreateSchema, jurisdictionPatchSchema } from '#shared/schemas/registry'
import type { Db } from '../../utils/db'
import type { RegistryListQuery } from '#shared/schemas/archive'
import { archivedFilter } from './archive'

type Tx = Parameters<Parameters<Db['transaction']>[0]>[0]
type Create = z.output<typeof jurisdictionCreateSchema>
type Patch = z.output<typeof jurisdictionPatchSchema>

// Written out in full: inside a subquery drizzle would leave the outer column unqualified.
const neighbourCodes = sql<string[]>`coalesce((
  select array_agg(n.code order by n.code) from jurisdiction_neighbours jn
  join jurisdictions n on n.id = jn.neighbour_id where jn.jurisdiction_id = "jurisdictions"."id"), '{}')`

const publicColumns = {
  code: jurisdictions.code,
  name: jurisdictions.name,
  kind: jurisdictions.kind,
  region: jurisdictions.region,
  attributes: jurisdictions.attributes,
  neighbours: neighbourCodes,
  archivedAt: jurisdictions.archivedAt,
  createdAt: jurisdictions.createdAt,
}

/** Current jurisdictions; `archived: 'include'` adds the archived ones, `'only'` lists just those. */
export async function listJurisdictions(db: Db | Tx, query: RegistryListQuery = {}) {
  return db.select(publicColumns).from(jurisdictions).where(archivedFilter(jurisdictions.archivedAt, query)).orderBy(asc(jurisdictions.code))
}

export async function findJurisdiction(db: Db | Tx, code: string) {
  const [row] = await db.select({ id: jurisdictions.id, ...publicColumns }).from(jurisdictions).where(eq(jurisdictions.code, code))
  if (!row) throw createError({ statusCode: 404, message: `No jurisdiction with code "${code}".` })
  return row
}

export async function getJurisdiction(db: Db, code: string) {
  const { id, ...row } = await findJurisdiction(db, code)
  const events = await db.select({ id: policyEvents.id, period: policyEvents.period, kind: policyEvents.kind, policy: policyEvents.policy, label: policyEvents.label })
    .from(policyEvents).where(eq(policyEvents.jurisdictionId, id)).orderBy(asc(policyEvents.period))
  return { ...row, policyEvents: events }
}

/** Ids of the given codes; 400 naming every unknown one. */
async function idsOf(tx: Tx, codes: string[], self?: string): Promise<number[]> {
  const wanted = [...new Set(codes)]
  if (self && wanted.includes(self)) badRequest(`A jurisdiction cannot be its own neighbour ("${self}").`, [{ path: 'neighbours', message: 'Remove the jurisdiction itself.' }])
  if (!wanted.length) return []
  const found = await tx.select({ id: jurisdictions.id, code: jurisdictions.code }).from(jurisdictions).where(inArray(jurisdictions.code, wanted))
  const unknown = wanted.filter(c => !found.some(f => f.code === c))
  if (unknown.length) badRequest(`Unknown neighbour code${unknown.length > 1 ? 's' : ''}: ${unknown.join(', ')}.`, unknown.map(c => ({ path: 'neighbours', message: `Unknown code "${c}".` })))
  return found.map(f => f.id)
}

async function setNeighbours(tx: Tx, id: number, neighbourIds: number[]) {
  await tx.delete(jurisdictionNeighbours).where(or(eq(jurisdictionNeighbours.jurisdictionId, id), eq(jurisdictionNeighbours.neighbourId, id)))
  if (!neighbourIds.length) return
  await tx.insert(jurisdictionNeighbours).values(neighbourIds.flatMap(n => [
    { jurisdictionId: id, neighbourId: n },
    { jurisdictionId: n, neighbourId: id },
  ])).onConflictDoNothing()
}

export async function createJurisdiction(db: Db, userId: number, body: Create) {
  return db.transaction(async (tx) => {
    const [existing] = await tx.select({ id: jurisdictions.id }).from(jurisdictions).where(eq(jurisdictions.code, body.code))
    if (existing) throw createError({ statusCode: 409, message: `A jurisdiction with code "${body.code}" already exists.` })
    const neighbourIds = await idsOf(tx, body.neighbours, body.code)
    const [row] = await tx.insert(jurisdictions).values({ code: body.code, name: body.name, kind: body.kind, region: body.region, attributes: body.attributes })
      .returning({ id: jurisdictions.id })
    await setNeighbours(tx, row!.id, neighbourIds)
    const { id, ...after } = await findJurisdiction(tx, body.code)
    await audit(tx, { userId, action: 'create', entity: 'jurisdiction', entityId: body.code, after })
    return after
  })
}

export async function updateJurisdiction(db: Db, userId: number, code: string, patch: Patch) {
  return db.transaction(async (tx) => {
    const { id, ...before } = await findJurisdiction(tx, code)
    const { neighbours, ...fields } = patch
    const set = Object.fromEntries(Object.entries(fields).filter(([, v]) => v !== undefined))
    if (Object.keys(set).length) await tx.update(jurisdictions).set(set).where(eq(jurisdictions.id, id))
    if (neighbours) await setNeighbours(tx, id, await idsOf(tx, neighbours, code))
    const { id: _, ...after } = await findJurisdiction(tx, code)
    await audit(tx, { userId, action: 'update', entity: 'jurisdiction', entityId: code, before, after })
    return after
  })
}

/** Deletes a jurisdiction that no data or policy event refers to (409 otherwise, saying what refers to it). */
export async function deleteJurisdiction(db: Db, userId: number, code: string) {
  return db.transaction(async (tx) => {
    const { id, ...before } = await findJurisdiction(tx, code)
    // Waits for an import holding this row (observations carry no foreign key; see db/schema.ts).
    await tx.execute(sql`select id from jurisdictions where id = ${id} for update`)
    const [obs] = await tx.select({ n: sql<number>`count(*)::int` }).from(observations).where(eq(observations.jurisdictionId, id))
    const [events] = await tx.select({ n: sql<number>`count(*)::int` }).from(policyEvents).where(eq(policyEvents.jurisdictionId, id))
    if (obs!.n || events!.n) {
      const what = [obs!.n ? `${obs!.n.toLocaleString('en')} observation${obs!.n === 1 ? '' : 's'}` : null, events!.n ? `${events!.n} policy event${events!.n === 1 ? '' : 's'}` : null].filter(Boolean).join(' and ')
      throw createError({ statusCode: 409, message: `"${code}" cannot be deleted: ${what} refer to it. Releases keep their data for reruns.` })
    }
    await tx.delete(jurisdictionNeighbours).where(and(or(eq(jurisdictionNeighbours.jurisdictionId, id), eq(jurisdictionNeighbours.neighbourId, id))))
    await tx.delete(jurisdictions).where(eq(jurisdictions.id, id))
    await audit(tx, { userId, action: 'delete', entity: 'jurisdiction', entityId: code, before })
    return { deleted: code }
  })
}
