/**
 * Review, comments and new versions of a study. Every change is audit-logged with the
 * row before and after; mails go out after the transaction commits.
 */
import { and, asc, eq, inArray } from 'drizzle-orm'
import { auditLog, comments, studies, studyPoolDecisions, studyRuns, users, validityNotes, type Study } from '~~/db/schema'
import type { ReviewAction } from '#shared/schemas/review'
import type { SessionUser } from '../../utils/auth'
import { assertStudyAccess } from '../../utils/studyAccess'
import { decideReview, reviewOutcomeMail, reviewRequestMail, reviewWithdrawnMail } from './rules'

const reviewState = (s: Pick<Study, 'status' | 'reviewerId' | 'lockedAt'>) => ({ status: s.status, reviewerId: s.reviewerId, lockedAt: s.lockedAt })

const studyLink = (id: number, page = 'review') => `${publicOrigin()}/studies/${id}/${page}`

export async function applyReview(user: SessionUser, studyId: number, body: ReviewAction) {
  const db = useDb()
  const outcome = await db.transaction(async (tx) => {
    const [study] = await tx.select().from(studies).where(eq(studies.id, studyId)).for('update')
    if (!study) throw createError({ statusCode: 404, message: `No study with id ${studyId}.` })
    const decision = decideReview(study, user, body.action)
    if (!decision.ok) throw createError({ statusCode: decision.statusCode, message: decision.message })

    let reviewerId = study.reviewerId
    if (body.action === 'request') {
      const [run] = await tx.select({ id: studyRuns.id }).from(studyRuns).where(eq(studyRuns.studyId, studyId)).limit(1)
      if (!run) throw createError({ statusCode: 409, message: 'There is nothing to review yet: run an estimate on the Estimates step first.' })
      const [reviewer] = await tx.select({ id: users.id, role: users.role, active: users.active }).from(users).where(eq(users.id, body.reviewerId))
      if (!reviewer || reviewer.role !== 'reviewer' || !reviewer.active) {
        badRequest('Choose an active reviewer for this study.', [{ path: 'reviewerId', message: 'Not an active reviewer.' }])
      }
      reviewerId = reviewer.id
    }
    const [updated] = await tx.update(studies).set({
      status: decision.status,
      reviewerId,
      lockedAt: decision.lock ? new Date() : study.lockedAt,
      updatedAt: new Date(),
    }).where(eq(studies.id, studyId)).returning()
    await audit(tx, {
      userId: user.id,
      action: `review.${body.action}`,
      entity: 'study',
      entityId: studyId,
      before: reviewState(study),
      after: { ...reviewState(updated!), note: body.note ?? null },
    })
    if (body.note) {
      const label = { request: 'Review requested', withdraw: 'Review request withdrawn', approve: 'Approved', return: 'Returned for changes' }[body.action]
      const [comment] = await tx.insert(comments).values({ studyId, authorId: user.id, body: `${label}: ${body.note}` }).returning()
      await audit(tx, { userId: user.id, action: 'create', entity: 'comment', entityId: comment!.id, after: comment })
    }
    return updated!
  })

  let mail: { to: string, sent: boolean, error?: string }
  if (body.action === 'request' || body.action === 'withdraw') {
    // withdraw keeps reviewer_id, so the reviewer who was asked hears that the request is off
    const [reviewer] = await db.select({ email: users.email }).from(users).where(eq(users.id, outcome.reviewerId!))
    const message = body.action === 'request'
      ? reviewRequestMail(outcome, user.name, studyLink(studyId), body.note)
      : reviewWithdrawnMail(outcome, user.name, studyLink(studyId), body.note)
    const sent = await sendMail({ to: reviewer!.email, ...message })
    mail = { to: reviewer!.email, ...sent }
  }
  else {
    const [owner] = await db.select({ email: users.email }).from(users).where(eq(users.id, outcome.ownerId))
    const sent = await sendMail({ to: owner!.email, ...reviewOutcomeMail(outcome, body.action === 'approve' ? 'approved' : 'returned', user.name, studyLink(studyId), body.note) })
    mail = { to: owner!.email, ...sent }
  }
  return { study: outcome, mail: { to: mail.to, sent: mail.sent, error: mail.error ?? null } }
}

/** The study's thread: comments (with their authors) and the review steps taken, oldest first. */
export async function listThread(studyId: number) {
  const db = useDb()
  const rows = await db.select({ id: comments.id, body: comments.body, createdAt: comments.createdAt, authorId: comments.authorId, author: users.name, authorRole: users.role })
    .from(comments).innerJoin(users, eq(users.id, comments.authorId))
    .where(eq(comments.studyId, studyId)).orderBy(asc(comments.createdAt), asc(comments.id))
  const steps = await db.select({ id: auditLog.id, at: auditLog.at, action: auditLog.action, after: auditLog.after, by: users.name })
    .from(auditLog).leftJoin(users, eq(users.id, auditLog.userId))
    .where(and(eq(auditLog.entity, 'study'), eq(auditLog.entityId, String(studyId)), inArray(auditLog.action, ['review.request', 'review.withdraw', 'review.approve', 'review.return', 'version.create'])))
    .orderBy(asc(auditLog.at), asc(auditLog.id))
  return {
    comments: rows,
    steps: steps.map(s => ({ id: s.id, at: s.at, action: s.action.replace(/^review\./, ''), by: s.by, note: (s.after as { note?: string | null } | null)?.note ?? null })),
  }
}

export async function addComment(user: SessionUser, studyId: number, body: string) {
  return useDb().transaction(async (tx) => {
    const [row] = await tx.insert(comments).values({ studyId, authorId: user.id, body }).returning()
    await audit(tx, { userId: user.id, action: 'create', entity: 'comment', entityId: row!.id, after: row })
    return { ...row!, author: user.name, authorRole: user.role }
  })
}

/** The active reviewers a study can be sent to. */
export async function listReviewers() {
  return useDb().select({ id: users.id, name: users.name, email: users.email }).from(users)
    .where(and(eq(users.role, 'reviewer'), eq(users.active, true))).orderBy(asc(users.name))
}

/**
 * A new draft version of a locked study: the same setup, pool decisions and validity record,
 * parent_id pointing at it and the next version number of its family. Runs are not copied.
 */
export async function createVersion(user: SessionUser, study: Study) {
  assertStudyAccess(study, user, 'version')
  return useDb().transaction(async (tx) => {
    const [child] = await tx.select({ id: studies.id, version: studies.version }).from(studies).where(eq(studies.parentId, study.id)).limit(1)
    if (child) throw createError({ statusCode: 409, message: `Version ${child.version} of this study already exists (study #${child.id}); continue there.`, data: { studyId: child.id } })
    const { id: _id, status: _s, reviewerId: _r, lockedAt: _l, createdAt: _c, updatedAt: _u, parentId: _p, version: _v, ...setup } = study
    const [created] = await tx.insert(studies).values({
      ...setup,
      ownerId: user.role === 'analyst' ? user.id : study.ownerId,
      parentId: study.id,
      version: study.version + 1,
      status: 'draft',
    }).returning()
    const decisions = await tx.select().from(studyPoolDecisions).where(eq(studyPoolDecisions.studyId, study.id))
    if (decisions.length) await tx.insert(studyPoolDecisions).values(decisions.map(d => ({ ...d, studyId: created!.id })))
    const notes = await tx.select().from(validityNotes).where(eq(validityNotes.studyId, study.id))
    if (notes.length) await tx.insert(validityNotes).values(notes.map(({ id: _n, ...n }) => ({ ...n, studyId: created!.id })))
    await audit(tx, { userId: user.id, action: 'version.create', entity: 'study', entityId: created!.id, before: { parentId: study.id, version: study.version }, after: created })
    await audit(tx, { userId: user.id, action: 'version.create', entity: 'study', entityId: study.id, after: { newVersionId: created!.id, version: created!.version, note: null } })
    return { ...created!, copied: { poolDecisions: decisions.length, validityNotes: notes.length } }
  })
}
