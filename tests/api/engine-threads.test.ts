/**
 * Estimates requested through the web run in the engine threads of the built server
 * (server/utils/enginePool.ts): what comes back must be exactly what the engine gives when
 * called directly on the same rows. On the seeded demo (fictional jurisdictions): each
 * design's run equals estimate() on the run's rows read back straight from the database,
 * its fingerprint equals fingerprintRows() on them, several runs sent at once (more than
 * the pool has threads, so some wait in the queue) all give the same answer, the pool
 * preview equals the did run on the same pool, and an engine refusal still comes back as a
 * 400 in the engine's words.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { as, type Client } from '../support/http'
import { closePool } from '../support/db'
import { runTag } from '../support/uploads'
import { readRowsBack } from '../support/studies'
import { estimate } from '../../server/engine'
import { fingerprintRows } from '../../server/services/studies/fingerprint'
import { demoStudyPayload } from '../support/demoStudy'

let analyst: Client
let studyId: number
const tag = runTag()

/** Warnings the server adds to the engine's, about the study (later interventions; staggered settings). */
const serverNote = (w: string) => /^The treated period spans a later intervention|^Group-time effects use every period/.test(w)

async function directly(run: { id: number, spec: unknown }) {
  const rows = await readRowsBack(run.id)
  return { rows, result: JSON.parse(JSON.stringify(estimate({ rows: rows.map(r => ({ unit: r.jurisdiction, period: r.period, values: r.values })) }, run.spec))) }
}

/**
 * A run's result whole again: a stored run keeps its placebo gap paths apart (placeboUnits names
 * them), and GET .../gaps gives them back; with them it must equal the engine's result exactly.
 */
async function whole(run: { id: number, result: any }) {
  const gaps = run.result.inference?.gaps
  if (!gaps?.placeboUnits) return run.result
  expect(gaps.placebos).toEqual([])
  const res = await analyst.get(`/api/studies/${studyId}/runs/${run.id}/gaps`)
  expect(res.status).toBe(200)
  expect(res.body.placebos.map((p: { unit: string }) => p.unit)).toEqual(gaps.placeboUnits)
  return { ...run.result, inference: { ...run.result.inference, gaps: res.body } }
}

beforeAll(async () => {
  analyst = await as('analyst')
  const study = await analyst.post('/api/studies', demoStudyPayload(`Engine threads ${tag}`))
  expect(study.status, JSON.stringify(study.body)).toBe(201)
  studyId = study.body.id
})
afterAll(closePool)

describe('estimates in the engine threads', () => {
  it('each design\'s run equals the engine called directly on the rows read back, fingerprint included', async () => {
    for (const design of ['did', 'event_study', 'its', 'pre_post', 'synthetic']) {
      const res = await analyst.post(`/api/studies/${studyId}/runs`, { design })
      expect(res.status, `${design}: ${JSON.stringify(res.body).slice(0, 300)}`).toBe(201)
      const run = res.body
      const { rows, result } = await directly(run)
      expect(rows.length).toBeGreaterThan(0)
      expect(fingerprintRows(rows, run.spec)).toBe(run.fingerprint)
      const mine = await whole(run)
      expect({ ...mine, warnings: mine.warnings.filter((w: string) => !serverNote(w)) }, design).toEqual(result)
    }
  })

  it('runs sent at once wait their turn and all give the same answer', async () => {
    const answers = await Promise.all(Array.from({ length: 6 }, () => analyst.post(`/api/studies/${studyId}/runs`, { design: 'did' })))
    for (const a of answers) expect(a.status, JSON.stringify(a.body).slice(0, 300)).toBe(201)
    // each is compared with the run stored just before it, never with itself or a later one
    const byId = answers.map(a => a.body).sort((a, b) => a.id - b.id)
    for (let i = 1; i < byId.length; i++) expect(byId[i].compare?.previousId).toBe(byId[i - 1].id)
    const { result } = await directly(answers[0]!.body)
    for (const a of answers) {
      expect(a.body.fingerprint).toBe(answers[0]!.body.fingerprint)
      const mine = await whole(a.body)
      expect({ ...mine, warnings: mine.warnings.filter((w: string) => !serverNote(w)) }).toEqual(result)
    }
  })

  it('the pool preview is the did run on the same pool', async () => {
    const table = (await analyst.get(`/api/studies/${studyId}/candidates`)).body.rows as { jurisdiction: string, included: boolean }[]
    const keep = table.filter(r => r.included).slice(0, 8).map(r => r.jurisdiction)
    expect(keep.length).toBeGreaterThan(2)
    const put = await analyst.put(`/api/studies/${studyId}/pool`, { decisions: table.filter(r => r.included).map(r => ({ jurisdiction: r.jurisdiction, included: keep.includes(r.jurisdiction), reason: keep.includes(r.jurisdiction) ? null : 'Left out to compare the preview with a run' })) })
    expect(put.status, JSON.stringify(put.body).slice(0, 300)).toBe(200)
    const run = await analyst.post(`/api/studies/${studyId}/runs`, { design: 'did' })
    expect(run.status).toBe(201)
    expect([...run.body.spec.comparison].sort()).toEqual([...keep].sort())
    expect(put.body.preview.effect).toEqual(run.body.result.effect)
  })

  it('an engine refusal from a thread is still a 400 in the engine\'s words', async () => {
    const bad = await analyst.post(`/api/studies/${studyId}/runs`, { design: 'its', options: { inference: { method: 'permutation' } } })
    expect(bad.status).toBe(400)
    expect(bad.body.message).toMatch(/cannot run: a single series has no comparison units/)
  })
})
