/**
 * Who may do what with a study, in one place (every study route calls this):
 * - read: any signed-in user (reviewers read everything);
 * - write: admins, and analysts on their own studies; never reviewers; never a locked study
 *   (approved, or locked_at set): such edits are refused with 409 and a clear message.
 * Returns the study row and the user, or throws 401/403/404/409.
 */
import type { H3Event } from 'h3'
import { eq } from 'drizzle-orm'
import { studies } from '~~/db/schema'
import type { SessionUser } from './auth'

export type Study = typeof studies.$inferSelect

export function isLocked(study: Pick<Study, 'status' | 'lockedAt'>): boolean {
  return study.status === 'approved' || study.lockedAt !== null
}

export async function requireStudy(event: H3Event, id: number, mode: 'read' | 'write'): Promise<{ user: SessionUser, study: Study }> {
  const user = await requireUser(event, mode === 'write' ? WRITERS : undefined)
  const [study] = await useDb().select().from(studies).where(eq(studies.id, id))
  if (!study) throw createError({ statusCode: 404, message: `No study with id ${id}.` })
  if (mode === 'write') {
    if (user.role !== 'admin' && study.ownerId !== user.id) {
      throw createError({ statusCode: 403, message: 'Only the study\'s owner or an administrator can change this study.' })
    }
    if (isLocked(study)) {
      throw createError({
        statusCode: 409,
        message: 'This study is approved and locked: its spec, pool, data and results cannot change. Start a new version to revise it.',
      })
    }
  }
  return { user, study }
}
