/**
 * A change to a study (a pool save, a run) locks the study row and checks again, under the lock,
 * that the study may change (server/utils/studyAccess.ts changeStudy). Here the row is held by
 * another transaction while a change is under way, and that transaction sends the study for
 * review before letting go: the change must then be refused with 409, leaving no pool decision,
 * run or audit entry behind. Without the lock it would land on a study in review.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { as, type Client } from '../support/http'
import { closePool, sql, testPool } from '../support/db'
import { runTag } from '../support/uploads'
import { demoStudyPayload } from '../support/demoStudy'

let analyst: Client
let studyId: number
let candidate: string

beforeAll(async () => {
  analyst = await as('analyst')
  const study = await analyst.post('/api/studies', demoStudyPayload(`Change lock ${runTag()}`))
  expect(study.status).toBe(201)
  studyId = study.body.id
  const table = (await analyst.get(`/api/studies/${studyId}/candidates`)).body.rows as { jurisdiction: string, flagged: boolean }[]
  candidate = table.find(r => !r.flagged)!.jurisdiction
})
afterAll(closePool)

/** Sends `change` while another transaction holds the study row, which then puts the study in review. */
async function whileSentForReview(change: () => Promise<{ status: number, body: any }>) {
  const holder = await testPool().connect()
  try {
    await holder.query('BEGIN')
    await holder.query('SELECT id FROM studies WHERE id = $1 FOR UPDATE', [studyId])
    const pending = change()
    // the change has passed its first checks (the study was a draft then) and waits for the row
    let waiting = 0
    for (let i = 0; i < 200 && !waiting; i++) {
      ;[{ n: waiting }] = await sql<{ n: number }>(`SELECT count(*)::int AS n FROM pg_stat_activity WHERE wait_event_type = 'Lock' AND query LIKE '%FROM studies WHERE id = ${studyId} FOR UPDATE%'`)
      if (!waiting) await new Promise(r => setTimeout(r, 50))
    }
    expect(waiting, 'the change never waited for the study row').toBe(1)
    await holder.query(`UPDATE studies SET status = 'in_review' WHERE id = $1`, [studyId])
    await holder.query('COMMIT')
    return await pending
  }
  finally {
    holder.release()
    await sql(`UPDATE studies SET status = 'draft' WHERE id = $1`, [studyId])
  }
}

describe('a change that waited for the study row', () => {
  it('a pool save is refused once the study went into review meanwhile, and leaves nothing', async () => {
    const audits = await sql(`SELECT id FROM audit_log WHERE entity = 'study' AND entity_id = $1 AND action = 'pool'`, [String(studyId)])
    const res = await whileSentForReview(() => analyst.put(`/api/studies/${studyId}/pool`, { decisions: [{ jurisdiction: candidate, included: false, reason: 'Lock test' }] }))
    expect(res.status, JSON.stringify(res.body)).toBe(409)
    expect(await sql(`SELECT 1 FROM study_pool_decisions d JOIN jurisdictions j ON j.id = d.jurisdiction_id WHERE d.study_id = $1 AND j.code = $2 AND d.reason = 'Lock test'`, [studyId, candidate])).toEqual([])
    expect(await sql(`SELECT id FROM audit_log WHERE entity = 'study' AND entity_id = $1 AND action = 'pool'`, [String(studyId)])).toEqual(audits)
  })

  it('a run is refused the same way and stores nothing', async () => {
    const res = await whileSentForReview(() => analyst.post(`/api/studies/${studyId}/runs`, { design: 'did' }))
    expect(res.status, JSON.stringify(res.body)).toBe(409)
    expect(await sql('SELECT id FROM study_runs WHERE study_id = $1', [studyId])).toEqual([])
    expect(await sql(`SELECT id FROM audit_log WHERE entity = 'study' AND entity_id = $1 AND action = 'run'`, [String(studyId)])).toEqual([])
    // and with the study a draft again, the same run lands
    expect((await analyst.post(`/api/studies/${studyId}/runs`, { design: 'did' })).status).toBe(201)
  })
})
