/**
 * Who may move a study through review, and to where (pure: the route and the tests use it).
 *   request: the owner analyst or an admin, on a draft          -> in_review
 *   approve: a reviewer (never an analyst, not even the owner), on a study in review -> approved, locked
 *   return:  a reviewer, on a study in review                   -> draft
 * Refusals carry the HTTP status the route answers with and a message a person understands.
 */
export type ReviewActionName = 'request' | 'approve' | 'return'
export type StudyStatus = 'draft' | 'in_review' | 'approved' | 'archived'

export interface ReviewSubject { status: StudyStatus, ownerId: number, lockedAt: Date | string | null }
export interface ReviewActor { id: number, role: 'admin' | 'analyst' | 'reviewer' }

export type ReviewDecision =
  | { ok: true, status: StudyStatus, lock: boolean }
  | { ok: false, statusCode: 403 | 409, message: string }

const STATUS_WORDS: Record<StudyStatus, string> = { draft: 'a draft', in_review: 'in review', approved: 'approved', archived: 'archived' }

export function decideReview(study: ReviewSubject, actor: ReviewActor, action: ReviewActionName): ReviewDecision {
  if (action === 'request') {
    if (actor.role === 'reviewer') return { ok: false, statusCode: 403, message: 'Reviewers approve or return studies; the study\'s owner requests the review.' }
    if (actor.role === 'analyst' && study.ownerId !== actor.id) return { ok: false, statusCode: 403, message: 'Only the study\'s owner or an administrator can request a review.' }
    if (study.status !== 'draft' || study.lockedAt) return { ok: false, statusCode: 409, message: `This study is ${STATUS_WORDS[study.status]}; only a draft can be sent for review.` }
    return { ok: true, status: 'in_review', lock: false }
  }
  if (actor.role !== 'reviewer') {
    return { ok: false, statusCode: 403, message: `Only a reviewer can ${action === 'approve' ? 'approve' : 'return'} a study; you are signed in as ${actor.role === 'admin' ? 'an admin' : 'an analyst'}.` }
  }
  if (study.status !== 'in_review') return { ok: false, statusCode: 409, message: `This study is ${STATUS_WORDS[study.status]}, not in review: there is nothing to ${action === 'approve' ? 'approve' : 'return'}.` }
  return action === 'approve' ? { ok: true, status: 'approved', lock: true } : { ok: true, status: 'draft', lock: false }
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
