/** The validity record: every threat listed, upserts with evidence, roles, validation, audit, and its place in the workbook. */
import ExcelJS from 'exceljs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closePool } from '../support/db'
import { type StudyFixture, studyWithRuns } from '../support/studyFixture'

let f: StudyFixture
beforeAll(async () => {
  f = await studyWithRuns()
})
afterAll(closePool)

describe('validity record', () => {
  it('lists every threat, none recorded yet', async () => {
    const res = await f.reviewer.get(`/api/studies/${f.studyId}/validity`)
    expect(res.status).toBe(200)
    expect(res.body.threats.map((t: { threat: string }) => t.threat)).toEqual(['history', 'maturation', 'testing', 'instrumentation', 'regression_to_mean', 'selection', 'diffusion'])
    expect(res.body.threats.every((t: { assessment: unknown }) => t.assessment === null)).toBe(true)
  })

  it('records threats with evidence, then updates one; the others stay', async () => {
    const first = await f.analyst.put(`/api/studies/${f.studyId}/validity`, {
      notes: [
        { threat: 'history', assessment: 'partly', note: 'A speed-camera programme started in 2008.', evidence: [{ kind: 'run', ref: String(f.runs.event.id), label: 'event study' }] },
        { threat: 'diffusion', assessment: 'open', note: '=neighbours not yet checked' },
      ],
    })
    expect(first.status, JSON.stringify(first.body)).toBe(200)
    const second = await f.analyst.put(`/api/studies/${f.studyId}/validity`, { notes: [{ threat: 'diffusion', assessment: 'addressed', note: 'Neighbours excluded from the pool.', evidence: [{ kind: 'chart', ref: 'trends:gap' }] }] })
    expect(second.status).toBe(200)
    const byThreat = Object.fromEntries(second.body.threats.map((t: { threat: string }) => [t.threat, t]))
    expect(byThreat.history).toMatchObject({ assessment: 'partly', evidence: [{ kind: 'run', ref: String(f.runs.event.id), label: 'event study' }], updatedBy: expect.any(String) })
    expect(byThreat.diffusion).toMatchObject({ assessment: 'addressed', note: 'Neighbours excluded from the pool.' })
    expect(byThreat.testing.assessment).toBeNull()
  })

  it('validates the payload', async () => {
    const r = await f.analyst.put(`/api/studies/${f.studyId}/validity`, { notes: [{ threat: 'luck', assessment: 'maybe' }] })
    expect(r.status).toBe(400)
    expect(r.body.data.issues.map((i: { path: string }) => i.path)).toEqual(expect.arrayContaining(['notes.0.threat', 'notes.0.assessment']))
    expect((await f.analyst.put(`/api/studies/${f.studyId}/validity`, { notes: [{ threat: 'history', assessment: 'open' }, { threat: 'history', assessment: 'addressed' }] })).status).toBe(400)
    expect((await f.analyst.put(`/api/studies/${f.studyId}/validity`, { notes: [] })).status).toBe(400)
  })

  it('reviewers read but cannot write', async () => {
    expect((await f.reviewer.put(`/api/studies/${f.studyId}/validity`, { notes: [{ threat: 'history', assessment: 'addressed' }] })).status).toBe(403)
  })

  it('audit-logs each change with before and after', async () => {
    const log = await f.admin.get(`/api/audit?entity=validity_note&entityId=${f.studyId}:diffusion`)
    expect(log.body.rows).toHaveLength(2)
    expect(log.body.rows[0]).toMatchObject({ action: 'update', before: { assessment: 'open' }, after: { assessment: 'addressed' } })
    expect(log.body.rows[1]).toMatchObject({ action: 'create', before: null })
  })

  it('shows in the workbook', async () => {
    const res = await f.analyst.raw(`/api/studies/${f.studyId}/runs/${f.runs.did.id}/workbook`)
    const wb = new ExcelJS.Workbook()
    await wb.xlsx.load(await res.arrayBuffer())
    const ws = wb.getWorksheet('Validity')!
    expect((ws.getRow(2).values as unknown[]).slice(1)).toEqual(['History', 'Partly addressed', 'A speed-camera programme started in 2008.', `run ${f.runs.event.id} (event study)`])
    expect((ws.getRow(8).values as unknown[]).slice(1, 3)).toEqual(['Diffusion or spillover', 'Addressed'])
  })
})
