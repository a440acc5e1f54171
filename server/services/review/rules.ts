/**
 * Where a review action takes a study (pure: the route and the tests use it). Who may take it is
 * the study access policy (../studies/access.ts):
 *   request:  the owner analyst or an admin, on a draft                    -> in_review
 *   withdraw: the owner analyst or an admin, on a study in review          -> draft
 *   approve:  a reviewer who does not own the study, on a study in review  -> approved, locked
 *   return:   a reviewer who does not own the study, on a study in review  -> draft
 * Refusals carry the HTTP status the route answers with and a message a person understands.
 */
import { studyAccess, type AccessActor, type AccessSubject, type StudyStatus } from '../studies/access'

export type ReviewActionName = 'request' | 'withdraw' | 'approve' | 'return'
export type { StudyStatus }
export type ReviewSubject = AccessSubject
export type ReviewActor = AccessActor

export type ReviewDecision =
  | { ok: true, status: StudyStatus, lock: boolean }
  | { ok: false, statusCode: 403 | 409, message: string }

const NEXT: Record<ReviewActionName, { status: StudyStatus, lock: boolean }> = {
  request: { status: 'in_review', lock: false },
  withdraw: { status: 'draft', lock: false },
  approve: { status: 'approved', lock: true },
  return: { status: 'draft', lock: false },
}

export function decideReview(study: ReviewSubject, actor: ReviewActor, action: ReviewActionName): ReviewDecision {
  const access = studyAccess(study, actor, action)
  if (!access.ok) return access
  return { ok: true, ...NEXT[action] }
}

export function reviewRequestMail(study: { id: number, title: string }, from: string, link: string, note?: string) {
  return {
    subject: `Review requested: ${study.title}`,
    text: [
      `${from} asks you to review the study "${study.title}" (#${study.id}) in Counterpart.`,
      ...(note ? ['', 'Their note:', note] : []),
      '',
      'Read it, comment, and approve or return it here:',
      link,
    ].join('\n'),
  }
}

export function reviewWithdrawnMail(study: { id: number, title: string }, by: string, link: string, note?: string) {
  return {
    subject: `Review request withdrawn: ${study.title}`,
    text: [
      `${by} withdrew the review request for the study "${study.title}" (#${study.id}). It is a draft again; you will get a new request when it is ready.`,
      ...(note ? ['', 'Their note:', note] : []),
      '',
      link,
    ].join('\n'),
  }
}

export function reviewOutcomeMail(study: { id: number, title: string }, outcome: 'approved' | 'returned', by: string, link: string, note?: string) {
  return {
    subject: outcome === 'approved' ? `Approved: ${study.title}` : `Returned for changes: ${study.title}`,
    text: [
      outcome === 'approved'
        ? `${by} approved the study "${study.title}" (#${study.id}). It is now locked: its spec, pool, data and results cannot change. Start a new version to revise it.`
        : `${by} returned the study "${study.title}" (#${study.id}) to draft for changes.`,
      ...(note ? ['', 'Reviewer\'s note:', note] : []),
      '',
      link,
    ].join('\n'),
  }
}
