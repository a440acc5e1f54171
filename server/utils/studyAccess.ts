/**
 * requireStudy(event, id, action): the signed-in user and the study, or 401/403/404/409.
 * Who may do what is decided in one place, server/services/studies/access.ts (read, write,
 * request, withdraw, approve, return, version); this only loads the study and applies it.
 * 'write' and 'version' first need a writer role (admin or analyst), so a reviewer gets the
 * role refusal every writer route gives.
 */
import type { H3Event } from 'h3'
import { eq, sql } from 'drizzle-orm'
import { studies, users, type Study } from '~~/db/schema'
import { changeableNow, studyAccess, type StudyAction } from '../services/studies/access'
import type { SessionUser } from './auth'
import type pg from 'pg'
import type { Db } from './db'

/** Throws the policy's refusal, if any, as an HTTP error. */
export function assertStudyAccess(study: Study, user: SessionUser, action: StudyAction): void {
  const decision = studyAccess(study, user, action)
  if (!decision.ok) throw createError({ statusCode: decision.statusCode, message: decision.message })
}

/**
 * The account and the study in one query, prepared once (named, so each connection parses and
 * plans it once too): it runs before almost every request about a study.
 */
const accountAndStudy = () => useDb()
  .select({ user: { id: users.id, email: users.email, name: users.name, role: users.role, active: users.active }, study: studies })
  .from(users).leftJoin(studies, eq(studies.id, sql.placeholder('id'))).where(eq(users.email, sql.placeholder('email')))
  .prepare('account_and_study')
let accountAndStudyQuery: ReturnType<typeof accountAndStudy> | undefined

export async function requireStudy(event: H3Event, id: number, action: StudyAction): Promise<{ user: SessionUser, study: Study }> {
  const email = await sessionEmail(event)
  accountAndStudyQuery ??= accountAndStudy()
  const [row] = await accountAndStudyQuery.execute({ id, email })
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

/** Where a `changeStudy` read names the study's id. */
export const STUDY_ID = ':study'

/**
 * A change to a study in three round trips instead of one per statement: (1) BEGIN, the study
 * row locked and checked again as lockStudyForChange does, and `read` (rows of the study, read
 * under the lock), sent as one message; (2) `write` on the same connection, best one statement;
 * (3) COMMIT. Under load each round trip waits its turn on the event loop, so this is most of
 * what a change costs. A message of several statements takes no parameters: `read` names the
 * study by STUDY_ID, replaced by the id (a safe integer, checked). Any error rolls back.
 */
export async function changeStudy<R extends pg.QueryResultRow, T>(studyId: number, read: string | null, write: (client: pg.PoolClient, read: R[]) => Promise<T>): Promise<T> {
  if (!Number.isSafeInteger(studyId)) throw new Error(`changeStudy: study id ${studyId} is not an integer.`)
  const client = await usePool().connect()
  let open = false
  try {
    const statements = ['BEGIN', `SELECT status, locked_at AS "lockedAt" FROM studies WHERE id = ${studyId} FOR UPDATE`, ...(read ? [read.replaceAll(STUDY_ID, String(studyId))] : [])]
    open = true
    const results = await client.query(statements.join(';\n')) as unknown as pg.QueryResult[]
    const study = results[1]!.rows[0] as Pick<Study, 'status' | 'lockedAt'> | undefined
    if (!study) throw createError({ statusCode: 404, message: `No study with id ${studyId}.` })
    const decision = changeableNow(study)
    if (!decision.ok) throw createError({ statusCode: decision.statusCode, message: decision.message })
    const value = await write(client, (results[2]?.rows ?? []) as R[])
    await client.query('COMMIT')
    open = false
    return value
  }
  catch (e) {
    if (open) await client.query('ROLLBACK').catch(() => {})
    throw e
  }
  finally {
    client.release()
  }
}
