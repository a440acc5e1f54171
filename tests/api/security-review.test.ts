/**
 * Review integrity (security finding 2), against the running server:
 * - the study's owner can never approve or return it, whatever role they hold now (an analyst who
 *   owns a study and is later made a reviewer is refused with 403); the role change is audited;
 * - a study in review is frozen: editing it, its pool, its validity record or running estimates
 *   is refused with 409 and a message saying to withdraw the review request first;
 * - the owner withdraws the request (audited, the reviewer is mailed) and can edit again.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { as, Client, DEMO } from '../support/http'
import { closePool, sql } from '../support/db'
import { waitForMail } from '../support/mail'
import { type StudyFixture, studyWithRuns } from '../support/studyFixture'

let f: StudyFixture
let reviewerId: number

beforeAll(async () => {
  f = await studyWithRuns({ title: `Frozen in review ${Date.now().toString(36)}` })
  reviewerId = (await f.analyst.get('/api/reviewers')).body.find((r: { email: string }) => r.email === DEMO.reviewer).id
})
afterAll(closePool)

const pool = () => ({ decisions: [{ jurisdiction: f.codes.excluded, included: false, reason: 'Adopted a similar rule in 2006 (re-stated)' }] })
const validity = { notes: [{ threat: 'diffusion', assessment: 'partly', note: 'Neighbours checked.', evidence: [] }] }

describe('a study in review is frozen until the request is withdrawn', () => {
  it('refuses PATCH, pool, validity and new runs with 409 while in review, for the owner and an admin', async () => {
    const requested = await f.analyst.post(`/api/studies/${f.studyId}/review`, { action: 'request', reviewerId })
    expect(requested.status, JSON.stringify(requested.body)).toBe(200)
    const attempts = {
      'PATCH study': await f.analyst.patch(`/api/studies/${f.studyId}`, { question: 'Changed while in review?' }),
      'PATCH study (admin)': await f.admin.patch(`/api/studies/${f.studyId}`, { title: 'Renamed by an admin' }),
      'PUT pool': await f.analyst.put(`/api/studies/${f.studyId}/pool`, pool()),
      'PUT validity': await f.analyst.put(`/api/studies/${f.studyId}/validity`, validity),
      'POST run': await f.analyst.post(`/api/studies/${f.studyId}/runs`, { design: 'did' }),
    }
    for (const [what, r] of Object.entries(attempts)) {
      expect(r.status, `${what}: ${JSON.stringify(r.body)}`).toBe(409)
      expect(r.body.message, what).toContain('Withdraw the review request first')
    }
    const [row] = await sql('SELECT status, question FROM studies WHERE id = $1', [f.studyId])
    expect(row).toMatchObject({ status: 'in_review', question: 'Did the helmet rule lower road deaths in the treated county?' })
    expect((await sql('SELECT count(*)::int AS n FROM study_runs WHERE study_id = $1', [f.studyId]))[0].n).toBe(2)
    const read = await f.analyst.get(`/api/studies/${f.studyId}`)
    expect(read.body).toMatchObject({ canEdit: false, inReview: true, editRefusal: expect.stringContaining('Withdraw') })
    expect((await f.reviewer.post(`/api/studies/${f.studyId}/comments`, { body: 'Reading it now.' })).status).toBe(201)
  })

  it('only the owner or an admin withdraws; the reviewer cannot', async () => {
    const byReviewer = await f.reviewer.post(`/api/studies/${f.studyId}/review`, { action: 'withdraw' })
    expect(byReviewer.status).toBe(403)
    expect(byReviewer.body.message).toContain('Only the study\'s owner or an administrator')
  })

  it('the owner withdraws: the study is a draft, the step is audited, the reviewer is mailed, edits work again', async () => {
    const res = await f.analyst.post(`/api/studies/${f.studyId}/review`, { action: 'withdraw', note: 'Adding the 2012 release first.' })
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    expect(res.body.study).toMatchObject({ status: 'draft', lockedAt: null })
    expect(res.body.mail).toMatchObject({ to: DEMO.reviewer, sent: true })
    await waitForMail(m => m.to === DEMO.reviewer && m.subject.startsWith('Review request withdrawn') && m.text.includes('Adding the 2012 release first.'))
    const [audit] = await sql(`SELECT before, after FROM audit_log WHERE entity = 'study' AND entity_id = $1 AND action = 'review.withdraw'`, [String(f.studyId)])
    expect(audit.before).toMatchObject({ status: 'in_review' })
    expect(audit.after).toMatchObject({ status: 'draft', note: 'Adding the 2012 release first.' })
    expect((await f.analyst.post(`/api/studies/${f.studyId}/review`, { action: 'withdraw' })).status).toBe(409)

    expect((await f.analyst.patch(`/api/studies/${f.studyId}`, { question: 'Did the rule lower road deaths?' })).status).toBe(200)
    expect((await f.analyst.put(`/api/studies/${f.studyId}/pool`, pool())).status).toBe(200)
    expect((await f.analyst.put(`/api/studies/${f.studyId}/validity`, validity)).status).toBe(200)
    expect((await f.analyst.post(`/api/studies/${f.studyId}/runs`, { design: 'did' })).status).toBe(201)
    const thread = await f.analyst.get(`/api/studies/${f.studyId}/comments`)
    expect(thread.body.steps.map((s: { action: string }) => s.action)).toEqual(['request', 'withdraw'])
  })
})

describe('the owner never reviews their own study', () => {
  it('an owner later given the reviewer role is refused approve and return (403); the role change is audited', async () => {
    const admin = await as('admin')
    const email = `owner-reviewer-${Date.now()}@counterpart.test`
    const created = await admin.post('/api/users', { email, name: 'Owner Then Reviewer', role: 'analyst', password: 'long-enough-pass' })
    expect(created.status).toBe(201)
    const owner = new Client()
    expect(await owner.signIn(email, 'long-enough-pass')).toBeNull()
    const study = await owner.post('/api/studies', { title: `Own review ${Date.now()}`, outcome: f.outcome, treated: [f.codes.treated], start: '2007' })
    expect(study.status, JSON.stringify(study.body)).toBe(201)
    const id = study.body.id
    expect((await owner.put(`/api/studies/${id}/pool`, { decisions: f.codes.comparison.map(jurisdiction => ({ jurisdiction, included: true })) })).status).toBe(200)
    expect((await owner.post(`/api/studies/${id}/runs`, { design: 'did' })).status).toBe(201)
    expect((await owner.post(`/api/studies/${id}/review`, { action: 'request', reviewerId })).status).toBe(200)

    expect((await admin.patch(`/api/users/${created.body.id}`, { role: 'reviewer' })).status).toBe(200)
    const [change] = await sql(`SELECT before, after FROM audit_log WHERE entity = 'user' AND entity_id = $1 AND action = 'update' ORDER BY id DESC LIMIT 1`, [String(created.body.id)])
    expect(change.before).toMatchObject({ role: 'analyst' })
    expect(change.after).toMatchObject({ role: 'reviewer' })

    const approve = await owner.post(`/api/studies/${id}/review`, { action: 'approve' })
    expect(approve.status).toBe(403)
    expect(approve.body.message).toContain('You own this study')
    const ret = await owner.post(`/api/studies/${id}/review`, { action: 'return', note: 'Fine by me' })
    expect(ret.status).toBe(403)
    const [row] = await sql('SELECT status, locked_at FROM studies WHERE id = $1', [id])
    expect(row).toMatchObject({ status: 'in_review', locked_at: null })
    expect((await f.reviewer.post(`/api/studies/${id}/review`, { action: 'approve' })).status).toBe(200)
  })
})
