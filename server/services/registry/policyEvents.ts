/** The policy-event registry: adoptions, strengthenings and repeals, by jurisdiction and period. */
import { and, asc, eq } from 'drizzle-orm'
import type { z } from 'zod'
import { jurisdictions, policyEvents } from '~~/db/schema'
import type { policyEventCreateSchema, policyEventQuerySchema } from '#shared/schemas/registry'
import type { Db } from '../../utils/db'

const columns = {
  id: policyEvents.id,
  jurisdiction: jurisdictions.code,
  period: policyEvents.period,
  kind: policyEvents.kind,
  policy: policyEvents.policy,
  label: policyEvents.label,
  notes: policyEvents.notes,
  createdAt: policyEvents.createdAt,
}

export async function listPolicyEvents(db: Db, query: z.output<typeof policyEventQuerySchema> = {}) {
  const where = and(
    query.jurisdiction ? eq(jurisdictions.code, query.jurisdiction) : undefined,
    query.policy ? eq(policyEvents.policy, query.policy) : undefined,
  )
  return db.select(columns).from(policyEvents)
    .innerJoin(jurisdictions, eq(jurisdictions.id, policyEvents.jurisdictionId))
    .where(where)
    .orderBy(asc(policyEvents.policy), asc(policyEvents.period), asc(jurisdictions.code))
}

export async function createPolicyEvent(db: Db, userId: number, body: z.output<typeof policyEventCreateSchema>) {
  return db.transaction(async (tx) => {
    const [j] = await tx.select({ id: jurisdictions.id }).from(jurisdictions).where(eq(jurisdictions.code, body.jurisdiction))
    if (!j) badRequest(`Unknown jurisdiction code "${body.jurisdiction}".`, [{ path: 'jurisdiction', message: 'Unknown code.' }])
    const [row] = await tx.insert(policyEvents).values({
      jurisdictionId: j.id, period: body.period, kind: body.kind, policy: body.policy, label: body.label, notes: body.notes, createdBy: userId,
    }).returning({ id: policyEvents.id })
    const [after] = await tx.select(columns).from(policyEvents)
      .innerJoin(jurisdictions, eq(jurisdictions.id, policyEvents.jurisdictionId)).where(eq(policyEvents.id, row!.id))
    await audit(tx, { userId, action: 'create', entity: 'policy_event', entityId: row!.id, after })
    return after!
  })
}
