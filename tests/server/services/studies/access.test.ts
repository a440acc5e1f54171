/** The study access policy (server/services/studies/access.ts): every action against every role and status. Small invented cases whose answers follow from the rules as written. */
import { describe, expect, it } from 'vitest'
import { editState, studyAccess, type AccessSubject, type StudyAction } from '../../../../server/services/studies/access'

const owner = { id: 5, role: 'analyst' as const }
const other = { id: 6, role: 'analyst' as const }
const admin = { id: 1, role: 'admin' as const }
const reviewer = { id: 9, role: 'reviewer' as const }
const study = (status: AccessSubject['status'], lockedAt: Date | null = null): AccessSubject => ({ status, ownerId: 5, lockedAt })

const code = (s: AccessSubject, actor: typeof owner | typeof admin | typeof reviewer, action: StudyAction) => {
  const d = studyAccess(s, actor, action)
  return d.ok ? 200 : d.statusCode
}

describe('studyAccess', () => {
  it('read: everyone, in every state', () => {
    for (const s of [study('draft'), study('in_review'), study('approved', new Date()), study('archived')]) {
      for (const actor of [owner, other, admin, reviewer]) expect(code(s, actor, 'read')).toBe(200)
    }
  })

  it('write: owner and admin on a draft; never others; 409 in review and when locked', () => {
    expect([owner, admin, other, reviewer].map(a => code(study('draft'), a, 'write'))).toEqual([200, 200, 403, 403])
    expect([owner, admin].map(a => code(study('in_review'), a, 'write'))).toEqual([409, 409])
    expect(studyAccess(study('in_review'), owner, 'write')).toMatchObject({ message: expect.stringContaining('Withdraw the review request first') })
    expect(code(study('approved', new Date()), owner, 'write')).toBe(409)
    expect(code(study('draft', new Date()), admin, 'write')).toBe(409)
    expect(code(study('archived'), owner, 'write')).toBe(200)
  })

  it('version: owner and admin, only from a locked study', () => {
    expect([owner, admin, other, reviewer].map(a => code(study('approved', new Date()), a, 'version'))).toEqual([200, 200, 403, 403])
    expect(code(study('draft'), owner, 'version')).toBe(409)
  })

  it('editState tells the page why it is read only', () => {
    expect(editState(study('draft'), owner)).toEqual({ locked: false, inReview: false, canEdit: true, editRefusal: null })
    expect(editState(study('in_review'), owner)).toMatchObject({ inReview: true, canEdit: false, editRefusal: expect.stringContaining('in review') })
    expect(editState(study('approved', new Date()), admin)).toMatchObject({ locked: true, canEdit: false })
  })
})
