/**
 * requireStudy(event, id, action): the signed-in user and the study, or 401/403/404/409.
 * Who may do what is decided in one place, server/services/studies/access.ts (read, write,
 * request, withdraw, approve, return, version); this only loads the study and applies it.
 * 'write' and 'version' first need a writer role (admin or analyst), so a reviewer gets the
 * role refusal every writer route gives.
 */
import type { H3Event } from 'h3'
import { eq } from 'drizzle-orm'
import { studies, users, type Study } from '~~/db/schema'
import { changeableNow, studyAccess, type StudyAction } from '../services/studies/access'
import type { SessionUser } from './auth'
import type { Db } from './db'

/** Throws the policy's refusal, if any, as an HTTP error. */
export function assertStudyAccess(study: Study, user: SessionUser, action: StudyAction): void {
  const decision = studyAccess(study, user, action)
  if (!decision.ok) throw createError({ statusCode: decision.statusCode, message: decision.message })
}

export async function requireStudy(event: H3Event, id: number, action: StudyAction): Promise<{ user: SessionUser, study: Study }> {
  const email = await sessionEmail(event)
  // the account and the study in one query
  const [row] = await useDb()
    .select({ user: { id: users.id, email: users.email, name: users.name, role: users.role, active: users.active }, study: studies })
    .from(users).leftJoin(studies, eq(studies.id, id)).where(eq(users.email, email))
  const user = activeUser(row?.user, action === 'write' || action === 'version' ? WRITERS : undefined)
  const study = row?.study
  if (!study) throw createError({ statusCode: 404, message: `No study with id ${id}.` })
  assertStudyAccess(study, user, action)
  return { user, study }
}

/**
 * Inside a write's transaction: lock the study row and check again that it may change. A review
 * request takes the same lock, so it cannot slip in between requireStudy and the write.
 */
export async function lockStudyForChange(tx: Pick<Db, 'select'>, studyId: number): Promise<Study> {
  const [study] = await tx.select().from(studies).where(eq(studies.id, studyId)).for('update')
  if (!study) throw createError({ statusCode: 404, message: `No study with id ${studyId}.` })
  const decision = changeableNow(study)
  if (!decision.ok) throw createError({ statusCode: decision.statusCode, message: decision.message })
  return study
}
