/**
 * Review end to end against the running server and the mail catcher: request (the reviewer
 * is mailed a link), comments, approve (the analyst is mailed; the study locks and every
 * edit is refused), a new version from the locked study; return with a note; and the roles:
 * only reviewers approve or return, an analyst can never approve, not even their own study.
 */
import ExcelJS from 'exceljs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO } from '../support/http'
import { closePool, sql } from '../support/db'
import { waitForMail } from '../support/mail'
import { type StudyFixture, studyWithRuns } from '../support/studyFixture'

let f: StudyFixture
let reviewerId: number
let title: string

beforeAll(async () => {
  f = await studyWithRuns()
  title = (await f.analyst.get(`/api/studies/${f.studyId}`)).body.title
  const reviewers = await f.analyst.get('/api/reviewers')
  expect(reviewers.status).toBe(200)
  reviewerId = reviewers.body.find((r: { email: string }) => r.email === DEMO.reviewer).id
})
afterAll(closePool)

describe('request, approve, lock, new version', () => {
  it('refuses review actions out of turn and from the wrong role', async () => {
    expect((await f.reviewer.post(`/api/studies/${f.studyId}/review`, { action: 'request', reviewerId })).status).toBe(403)
    const early = await f.reviewer.post(`/api/studies/${f.studyId}/review`, { action: 'approve' })
    expect(early.status).toBe(409)
    expect(early.body.message).toContain('not in review')
    const bad = await f.analyst.post(`/api/studies/${f.studyId}/review`, { action: 'request', reviewerId: 999999 })
    expect(bad.status).toBe(400)
    const noAction = await f.analyst.post(`/api/studies/${f.studyId}/review`, { action: 'publish' })
    expect(noAction.status).toBe(400)
  })

  it('refuses to send a study without runs', async () => {
    const empty = await f.analyst.post('/api/studies', { title: `Not yet estimated ${f.tag}`, outcome: f.outcome, treated: [f.codes.treated], start: '2007' })
    expect(empty.status).toBe(201)
    const res = await f.analyst.post(`/api/studies/${empty.body.id}/review`, { action: 'request', reviewerId })
    expect(res.status).toBe(409)
    expect(res.body.message).toContain('run an estimate')
  })

  it('the owner requests review; the reviewer is mailed a link', async () => {
    const res = await f.analyst.post(`/api/studies/${f.studyId}/review`, { action: 'request', reviewerId, note: 'Please check the pool.' })
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    expect(res.body.study).toMatchObject({ status: 'in_review', reviewerId, lockedAt: null })
    expect(res.body.mail).toMatchObject({ to: DEMO.reviewer, sent: true })
    const mail = await waitForMail(m => m.to === DEMO.reviewer && m.subject === `Review requested: ${title}`)
    expect(mail.text).toContain(`/studies/${f.studyId}/review`)
    expect(mail.text).toContain('Please check the pool.')
    expect((await f.analyst.post(`/api/studies/${f.studyId}/review`, { action: 'request', reviewerId })).status).toBe(409)
  })

  it('an analyst cannot approve, not even their own study; nor can an admin', async () => {
    const own = await f.analyst.post(`/api/studies/${f.studyId}/review`, { action: 'approve' })
    expect(own.status).toBe(403)
    expect(own.body.message).toContain('Only a reviewer')
    expect((await f.analyst.post(`/api/studies/${f.studyId}/review`, { action: 'return', note: 'x' })).status).toBe(403)
    expect((await f.admin.post(`/api/studies/${f.studyId}/review`, { action: 'approve' })).status).toBe(403)
    const [row] = await sql('SELECT status, locked_at FROM studies WHERE id = $1', [f.studyId])
    expect(row).toMatchObject({ status: 'in_review', locked_at: null })
  })

  it('the reviewer comments; everyone reads the thread', async () => {
    const c = await f.reviewer.post(`/api/studies/${f.studyId}/comments`, { body: 'Pool looks reasonable; the excluded county is explained.' })
    expect(c.status).toBe(201)
    expect((await f.reviewer.post(`/api/studies/${f.studyId}/comments`, { body: '  ' })).status).toBe(400)
    const thread = await f.analyst.get(`/api/studies/${f.studyId}/comments`)
    expect(thread.status).toBe(200)
    expect(thread.body.comments.map((x: { body: string }) => x.body)).toEqual(['Review requested: Please check the pool.', 'Pool looks reasonable; the excluded county is explained.'])
    expect(thread.body.comments[1]).toMatchObject({ author: expect.any(String), authorRole: 'reviewer' })
    expect(thread.body.steps.map((s: { action: string }) => s.action)).toEqual(['request'])
  })

  it('the reviewer approves: the study locks and the analyst is mailed', async () => {
    const res = await f.reviewer.post(`/api/studies/${f.studyId}/review`, { action: 'approve', note: 'Approved for the budget memo.' })
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    expect(res.body.study.status).toBe('approved')
    expect(res.body.study.lockedAt).toBeTruthy()
    const mail = await waitForMail(m => m.to === DEMO.analyst && m.subject === `Approved: ${title}`)
    expect(mail.text).toContain('locked')
    expect(mail.text).toContain('Approved for the budget memo.')
  })

  it('refuses every edit of the approved study with a clear message', async () => {
    const id = f.studyId
    const attempts = [
      await f.analyst.patch(`/api/studies/${id}`, { title: 'Changed after approval' }),
      await f.admin.patch(`/api/studies/${id}`, { question: 'Changed by an admin' }),
      await f.analyst.put(`/api/studies/${id}/pool`, { decisions: [{ jurisdiction: f.codes.excluded, included: true }] }),
      await f.analyst.post(`/api/studies/${id}/runs`, { design: 'did' }),
      await f.analyst.put(`/api/studies/${id}/validity`, { notes: [{ threat: 'history', assessment: 'addressed' }] }),
    ]
    for (const r of attempts) {
      expect(r.status, JSON.stringify(r.body)).toBe(409)
      expect(r.body.message).toContain('approved and locked')
    }
    expect((await f.reviewer.post(`/api/studies/${id}/review`, { action: 'return', note: 'too late' })).status).toBe(409)
    const [row] = await sql('SELECT title, status FROM studies WHERE id = $1', [id])
    expect(row).toMatchObject({ title, status: 'approved' })
    expect((await sql('SELECT count(*)::int AS n FROM study_runs WHERE study_id = $1', [id]))[0].n).toBe(2)
    // reading and exporting still work, and the workbook says who approved it
    const res = await f.reviewer.raw(`/api/studies/${id}/runs/${f.runs.did.id}/workbook`)
    expect(res.status).toBe(200)
    const wb = new ExcelJS.Workbook()
    await wb.xlsx.load(await res.arrayBuffer())
    let review = ''
    wb.getWorksheet('Summary')!.eachRow((r) => {
      if (r.getCell(1).value === 'Review') review = String(r.getCell(2).value)
    })
    expect(review).toMatch(new RegExp(`^Approved by .*\\(${DEMO.reviewer}\\) on \\d{4}-\\d{2}-\\d{2}T.*; locked$`))
  })

  it('the database itself refuses changes to the locked study, its runs, pool and validity record', async () => {
    const id = f.studyId
    const refused = [
      `UPDATE studies SET title = 'changed below the application' WHERE id = ${id}`,
      `UPDATE studies SET locked_at = NULL WHERE id = ${id}`,
      `UPDATE study_runs SET result = '{}'::jsonb WHERE study_id = ${id}`,
      `DELETE FROM study_runs WHERE study_id = ${id}`,
      `UPDATE study_pool_decisions SET included = NOT included WHERE study_id = ${id}`,
      `INSERT INTO validity_notes (study_id, threat, assessment) VALUES (${id}, 'testing', 'open')`,
    ]
    for (const statement of refused) await expect(sql(statement), statement).rejects.toThrow('approved and locked')
    await sql(`UPDATE studies SET updated_at = now() WHERE id = ${id}`)
  })

  it('a new version starts from the locked study as an editable draft', async () => {
    expect((await f.reviewer.post(`/api/studies/${f.studyId}/versions`)).status).toBe(403)
    const res = await f.analyst.post(`/api/studies/${f.studyId}/versions`)
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    expect(res.body).toMatchObject({ parentId: f.studyId, version: 2, status: 'draft', lockedAt: null, title, copied: { poolDecisions: 6 } })
    const v2 = res.body.id
    const pool = await sql('SELECT count(*)::int AS n FROM study_pool_decisions WHERE study_id = $1', [v2])
    expect(pool[0].n).toBe(6)
    expect((await f.analyst.patch(`/api/studies/${v2}`, { question: 'Revised with the 2013 release?' })).status).toBe(200)
    expect((await f.analyst.post(`/api/studies/${v2}/runs`, { design: 'did' })).status).toBe(201)
    const again = await f.analyst.post(`/api/studies/${f.studyId}/versions`)
    expect(again.status).toBe(409)
    expect(again.body.message).toContain('already exists')
    expect((await f.analyst.post(`/api/studies/${v2}/versions`)).status).toBe(409)
  })

  it('audit-logs each review step with before and after', async () => {
    const log = await f.admin.get(`/api/audit?entity=study&entityId=${f.studyId}&action=review`)
    expect(log.status).toBe(200)
    const steps = log.body.rows.map((r: { action: string }) => r.action)
    expect(steps).toEqual(['review.approve', 'review.request'])
    const approve = log.body.rows[0]
    expect(approve.before).toMatchObject({ status: 'in_review', lockedAt: null })
    expect(approve.after).toMatchObject({ status: 'approved', note: 'Approved for the budget memo.' })
    expect(approve.userEmail).toBe(DEMO.reviewer)
  })
})

describe('return with a note', () => {
  let g: StudyFixture
  beforeAll(async () => {
    g = await studyWithRuns()
    expect((await g.analyst.post(`/api/studies/${g.studyId}/review`, { action: 'request', reviewerId })).status).toBe(200)
  })

  it('needs a note, goes back to draft, mails the analyst, and the study is editable again', async () => {
    const noNote = await g.reviewer.post(`/api/studies/${g.studyId}/review`, { action: 'return' })
    expect(noNote.status).toBe(400)
    const res = await g.reviewer.post(`/api/studies/${g.studyId}/review`, { action: 'return', note: 'Add a placebo date check.' })
    expect(res.status).toBe(200)
    expect(res.body.study).toMatchObject({ status: 'draft', lockedAt: null })
    const t = (await g.analyst.get(`/api/studies/${g.studyId}`)).body.title
    const mail = await waitForMail(m => m.to === DEMO.analyst && m.subject === `Returned for changes: ${t}`)
    expect(mail.text).toContain('Add a placebo date check.')
    expect((await g.analyst.patch(`/api/studies/${g.studyId}`, { question: 'Revised question' })).status).toBe(200)
    expect((await g.analyst.post(`/api/studies/${g.studyId}/versions`)).status).toBe(409)
  })
})
