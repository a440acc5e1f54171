/**
 * The study access policy, in one place (pure: no Nitro, Vue or database; requireStudy, the
 * review service, the study read-out and the tests all ask it):
 * - read:     any signed-in user (reviewers read everything);
 * - write:    admins, and analysts on their own studies; never reviewers; never while the study is
 *             in review (withdraw the request first) nor once it is locked (approved or locked_at);
 * - request:  the owner analyst or an admin, on an unlocked draft;
 * - withdraw: the owner analyst or an admin, on a study in review (it goes back to draft);
 * - approve / return: a reviewer who does not own the study, on a study in review;
 * - version:  the owner analyst or an admin, on a locked study.
 * A refusal carries the HTTP status (403 who, 409 state) and a message a person understands.
 */
export type StudyAction = 'read' | 'write' | 'request' | 'withdraw' | 'approve' | 'return' | 'version'
export type StudyStatus = 'draft' | 'in_review' | 'approved' | 'archived'

export interface AccessSubject { status: StudyStatus, ownerId: number, lockedAt: Date | string | null }
export interface AccessActor { id: number, role: 'admin' | 'analyst' | 'reviewer' }

export type AccessDecision = { ok: true } | { ok: false, statusCode: 403 | 409, message: string }

const STATUS_WORDS: Record<StudyStatus, string> = { draft: 'a draft', in_review: 'in review', approved: 'approved', archived: 'archived' }

export const IN_REVIEW_MESSAGE = 'This study is in review: it cannot change while a reviewer reads it. Withdraw the review request first (Review step), then edit it and request the review again.'
export const LOCKED_MESSAGE = 'This study is approved and locked: its spec, pool, data and results cannot change. Start a new version to revise it.'

export function isLocked(study: Pick<AccessSubject, 'status' | 'lockedAt'>): boolean {
  return study.status === 'approved' || study.lockedAt !== null
}

const ok: AccessDecision = { ok: true }
const refuse = (statusCode: 403 | 409, message: string): AccessDecision => ({ ok: false, statusCode, message })
const isOwnerOrAdmin = (study: AccessSubject, actor: AccessActor) =>
  actor.role === 'admin' || (actor.role === 'analyst' && study.ownerId === actor.id)

/** The state half of 'write': may a study in this state change at all (whoever asks)? */
export function changeableNow(study: Pick<AccessSubject, 'status' | 'lockedAt'>): AccessDecision {
  if (isLocked(study)) return refuse(409, LOCKED_MESSAGE)
  if (study.status === 'in_review') return refuse(409, IN_REVIEW_MESSAGE)
  return ok
}

export function studyAccess(study: AccessSubject, actor: AccessActor, action: StudyAction): AccessDecision {
  switch (action) {
    case 'read':
      return ok
    case 'write':
      if (!isOwnerOrAdmin(study, actor)) return refuse(403, 'Only the study\'s owner or an administrator can change this study.')
      return changeableNow(study)
    case 'request':
      if (actor.role === 'reviewer') return refuse(403, 'Reviewers approve or return studies; the study\'s owner requests the review.')
      if (!isOwnerOrAdmin(study, actor)) return refuse(403, 'Only the study\'s owner or an administrator can request a review.')
      if (study.status !== 'draft' || study.lockedAt) return refuse(409, `This study is ${STATUS_WORDS[study.status]}; only a draft can be sent for review.`)
      return ok
    case 'withdraw':
      if (!isOwnerOrAdmin(study, actor)) return refuse(403, 'Only the study\'s owner or an administrator can withdraw its review request.')
      if (study.status !== 'in_review') return refuse(409, `This study is ${STATUS_WORDS[study.status]}, not in review: there is no review request to withdraw.`)
      return ok
    case 'approve':
    case 'return': {
      const verb = action === 'approve' ? 'approve' : 'return'
      if (actor.role !== 'reviewer') return refuse(403, `Only a reviewer can ${verb} a study; you are signed in as ${actor.role === 'admin' ? 'an admin' : 'an analyst'}.`)
      if (study.ownerId === actor.id) return refuse(403, `You own this study, so you cannot ${verb} it: another person with the reviewer role must review it.`)
      if (study.status !== 'in_review') return refuse(409, `This study is ${STATUS_WORDS[study.status]}, not in review: there is nothing to ${verb}.`)
      return ok
    }
    case 'version':
      if (!isOwnerOrAdmin(study, actor)) return refuse(403, 'Only the study\'s owner or an administrator can start a new version.')
      if (!isLocked(study)) return refuse(409, 'This study is not locked: change it directly. New versions start from an approved study.')
      return ok
  }
}

/** What the study read-out tells the page: may this user edit it now, and why not. */
export function editState(study: AccessSubject, actor: AccessActor) {
  const write = studyAccess(study, actor, 'write')
  return { locked: isLocked(study), inReview: study.status === 'in_review', canEdit: write.ok, editRefusal: write.ok ? null : write.message }
}
