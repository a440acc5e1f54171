/** The review state machine: who may request, approve and return, from which status. */
import { describe, expect, it } from 'vitest'
import { decideReview, reviewOutcomeMail, reviewRequestMail } from '../../../../server/services/review/rules'

const draft = { status: 'draft' as const, ownerId: 5, lockedAt: null }
const inReview = { ...draft, status: 'in_review' as const }
const owner = { id: 5, role: 'analyst' as const }
const otherAnalyst = { id: 6, role: 'analyst' as const }
const admin = { id: 1, role: 'admin' as const }
const reviewer = { id: 9, role: 'reviewer' as const }

describe('decideReview', () => {
  it('request: owner or admin, from draft to in review', () => {
    expect(decideReview(draft, owner, 'request')).toEqual({ ok: true, status: 'in_review', lock: false })
    expect(decideReview(draft, admin, 'request')).toEqual({ ok: true, status: 'in_review', lock: false })
    expect(decideReview(draft, otherAnalyst, 'request')).toMatchObject({ ok: false, statusCode: 403 })
    expect(decideReview(draft, reviewer, 'request')).toMatchObject({ ok: false, statusCode: 403 })
    expect(decideReview(inReview, owner, 'request')).toMatchObject({ ok: false, statusCode: 409 })
    expect(decideReview({ ...draft, lockedAt: new Date() }, owner, 'request')).toMatchObject({ ok: false, statusCode: 409 })
  })

  it('approve: reviewers only, never the owner analyst or an admin; locks', () => {
    expect(decideReview(inReview, reviewer, 'approve')).toEqual({ ok: true, status: 'approved', lock: true })
    for (const actor of [owner, otherAnalyst, admin]) {
      const d = decideReview(inReview, actor, 'approve')
      expect(d).toMatchObject({ ok: false, statusCode: 403 })
      expect(d.ok || d.message).toContain('Only a reviewer')
    }
    expect(decideReview(draft, reviewer, 'approve')).toMatchObject({ ok: false, statusCode: 409 })
    expect(decideReview({ ...inReview, status: 'approved' }, reviewer, 'approve')).toMatchObject({ ok: false, statusCode: 409 })
  })

  it('return: reviewers only, back to draft without a lock', () => {
    expect(decideReview(inReview, reviewer, 'return')).toEqual({ ok: true, status: 'draft', lock: false })
    expect(decideReview(inReview, owner, 'return')).toMatchObject({ ok: false, statusCode: 403 })
    expect(decideReview(draft, reviewer, 'return')).toMatchObject({ ok: false, statusCode: 409 })
  })

  it('withdraw: owner or admin, from in review back to draft', () => {
    expect(decideReview(inReview, owner, 'withdraw')).toEqual({ ok: true, status: 'draft', lock: false })
    expect(decideReview(inReview, admin, 'withdraw')).toEqual({ ok: true, status: 'draft', lock: false })
    expect(decideReview(inReview, otherAnalyst, 'withdraw')).toMatchObject({ ok: false, statusCode: 403 })
    expect(decideReview(inReview, reviewer, 'withdraw')).toMatchObject({ ok: false, statusCode: 403 })
    expect(decideReview(draft, owner, 'withdraw')).toMatchObject({ ok: false, statusCode: 409 })
  })

  it('an owner who holds the reviewer role can neither approve nor return their own study', () => {
    const ownerReviewer = { id: 5, role: 'reviewer' as const }
    for (const action of ['approve', 'return'] as const) {
      const d = decideReview(inReview, ownerReviewer, action)
      expect(d).toMatchObject({ ok: false, statusCode: 403 })
      expect(d.ok || d.message).toContain('You own this study')
    }
  })

  it('mails carry the link and the note', () => {
    const req = reviewRequestMail({ id: 3, title: 'Fee cut' }, 'Ana', 'http://x.test/studies/3/review', 'Please look at the pool')
    expect(req.subject).toBe('Review requested: Fee cut')
    expect(req.text).toContain('http://x.test/studies/3/review')
    expect(req.text).toContain('Please look at the pool')
    const back = reviewOutcomeMail({ id: 3, title: 'Fee cut' }, 'returned', 'Rev', 'http://x.test/studies/3/review', 'Check 2019')
    expect(back.subject).toBe('Returned for changes: Fee cut')
    expect(back.text).toContain('Check 2019')
    expect(reviewOutcomeMail({ id: 3, title: 'Fee cut' }, 'approved', 'Rev', 'l').text).toContain('locked')
  })
})
