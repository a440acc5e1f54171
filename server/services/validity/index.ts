/** The validity record of a study: one note per threat, read in the order of THREATS, written with an audit entry per threat. */
import { eq } from 'drizzle-orm'
import type { z } from 'zod'
import { users, validityNotes } from '~~/db/schema'
import { THREATS, type ValidityEntry, type validityPutSchema } from '#shared/schemas/validity'
import type { SessionUser } from '../../utils/auth'
import type { Db } from '../../utils/db'

type Note = typeof validityNotes.$inferSelect

export async function readValidity(db: Pick<Db, 'select'>, studyId: number): Promise<ValidityEntry[]> {
  const rows = await db.select({ note: validityNotes, by: users.name }).from(validityNotes)
    .leftJoin(users, eq(users.id, validityNotes.updatedBy)).where(eq(validityNotes.studyId, studyId))
  const byThreat = new Map(rows.map(r => [r.note.threat, r]))
  return THREATS.map((t) => {
    const r = byThreat.get(t.key)
    return {
      threat: t.key,
      label: t.label,
      prompt: t.prompt,
      assessment: r?.note.assessment ?? null,
      note: r?.note.note ?? '',
      evidence: r?.note.evidence as ValidityEntry['evidence'] ?? [],
      updatedBy: r?.by ?? null,
      updatedAt: r?.note.updatedAt.toISOString() ?? null,
    }
  })
}

const shown = (n: Note | undefined) => (n ? { assessment: n.assessment, note: n.note, evidence: n.evidence } : null)

export async function writeValidity(user: SessionUser, studyId: number, body: z.output<typeof validityPutSchema>): Promise<ValidityEntry[]> {
  return useDb().transaction(async (tx) => {
    await lockStudyForChange(tx, studyId)
    const existing = new Map((await tx.select().from(validityNotes).where(eq(validityNotes.studyId, studyId))).map(n => [n.threat, n]))
    for (const n of body.notes) {
      const before = existing.get(n.threat)
      const values = { assessment: n.assessment, note: n.note, evidence: n.evidence, updatedBy: user.id, updatedAt: new Date() }
      const [after] = await tx.insert(validityNotes).values({ studyId, threat: n.threat, ...values })
        .onConflictDoUpdate({ target: [validityNotes.studyId, validityNotes.threat], set: values }).returning()
      const changed = JSON.stringify(shown(before)) !== JSON.stringify(shown(after))
      if (changed) {
        await audit(tx, { userId: user.id, action: before ? 'update' : 'create', entity: 'validity_note', entityId: `${studyId}:${n.threat}`, before: before ?? null, after })
      }
    }
    return readValidity(tx, studyId)
  })
}
