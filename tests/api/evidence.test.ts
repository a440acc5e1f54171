/**
 * Computed evidence on the threats to validity over HTTP (GET /api/studies/:id/evidence) on the
 * demo scenario (db/seed/demoScenario.ts): refusals (no session, a bad or unknown id), the seven
 * threats each with a verdict, figure, explanation and rule, the history figure checked against
 * the Trends step's own series (the same two-by-two difference in differences over 3 periods on each
 * side of the start, written out here),
 * the neighbours found from the registry's neighbour links, the workbook's sheet, and revisions
 * between two releases of a small invented study (one treated value raised by 10% in a second
 * release: known by construction).
 */
import ExcelJS from 'exceljs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { anonymous, as, type Client } from '../support/http'
import { closePool, sql } from '../support/db'
import { importCsv, studyWithRuns } from '../support/studyFixture'
import { runTag } from '../support/uploads'
import { ADOPTED, FIRST_ADOPTER, OUTCOME, STRENGTHENED, demoNeighbours } from '../../db/seed/demoScenario'

let analyst: Client
let reviewer: Client
let id: number
const tag = runTag()

beforeAll(async () => {
  ;[analyst, reviewer] = await Promise.all([as('analyst'), as('reviewer')])
  const res = await analyst.post('/api/studies', {
    title: `Evidence on mediation first, ${tag}`,
    question: 'Did mediation before filing lower eviction filings in the first adopter?',
    outcome: OUTCOME,
    treated: [FIRST_ADOPTER],
    start: ADOPTED,
    interventions: [
      { jurisdiction: FIRST_ADOPTER, period: ADOPTED, label: 'Mediation first adopted' },
      { jurisdiction: FIRST_ADOPTER, period: STRENGTHENED, label: 'Mediation strengthened' },
    ],
    window: { pre: ['2012-01', '2017-06'], post: ['2017-07', '2019-12'] },
    covariates: [],
  })
  expect(res.status, JSON.stringify(res.body)).toBe(201)
  id = res.body.id
})
afterAll(closePool)

const mean = (xs: (number | null)[]) => {
  const v = xs.filter((x): x is number => x !== null)
  return v.reduce((a, b) => a + b, 0) / v.length
}

describe('threat evidence', () => {
  it('refuses without a session, with a bad id, and for an unknown study', async () => {
    expect((await anonymous().get(`/api/studies/${id}/evidence`)).status).toBe(401)
    const bad = await reviewer.get('/api/studies/not-a-number/evidence')
    expect(bad.status).toBe(400)
    expect(bad.body.message).toMatch(/id/i)
    const unknown = await reviewer.get('/api/studies/999999/evidence')
    expect(unknown.status).toBe(404)
    expect(unknown.body.message).toMatch(/No study with id 999999/)
  })

  it('gives every reader the seven threats, each with a verdict, a figure, an explanation and its rule', async () => {
    const t0 = Date.now()
    const res = await reviewer.get(`/api/studies/${id}/evidence`)
    console.log(`threat evidence on the demo: ${Date.now() - t0} ms`)
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    const threats = res.body.threats as { threat: string, label: string, verdict: string, figure: string, explanation: string, rule: string, figures: Record<string, number | null> }[]
    expect(threats.map(t => t.threat)).toEqual(['history', 'maturation', 'testing', 'instrumentation', 'regression_to_mean', 'selection', 'diffusion'])
    for (const t of threats) {
      expect(['supports', 'weakens', 'unclear'], t.threat).toContain(t.verdict)
      expect(t.figure.length, t.threat).toBeGreaterThan(20)
      expect(t.explanation.length, t.threat).toBeGreaterThan(20)
      expect(t.rule.length, t.threat).toBeGreaterThan(20)
      expect(Object.keys(t.figures).length, t.threat).toBeGreaterThan(0)
    }
    expect(res.body.note).toMatch(/starting point/)
    expect(res.body.periods).toMatchObject({ first: '2012-01', start: ADOPTED, last: '2019-12', pre: 66, post: 30 })

    // history: the real effect is the two-by-two gap change of the Trends step's own series over the
    // 3 periods from the start against the 3 before it (every date, real or fake, is judged alike)
    const trends = (await reviewer.get(`/api/studies/${id}/trends`)).body
    const nPre = (trends.prePeriods as boolean[]).filter(Boolean).length
    const before = (xs: (number | null)[]) => mean(xs.slice(nPre - 3, nPre))
    const after = (xs: (number | null)[]) => mean(xs.slice(nPre, nPre + 3))
    const actual = after(trends.treated.levels) - before(trends.treated.levels) - (after(trends.pool.levels) - before(trends.pool.levels))
    const history = threats[0]!
    expect(nPre).toBe(66)
    expect(history.figures.window).toBe(3)
    expect(history.figures.actualEffect).toBeCloseTo(actual, 10)
    // fake dates 3..63 of 66 pre-periods: 61 of them
    expect(history.figures.fakeDates).toBe(61)

    // diffusion: the first adopter's neighbours from the registry, none of them in the pool
    const neighbours = demoNeighbours().filter(([a, b]) => a === FIRST_ADOPTER || b === FIRST_ADOPTER).map(([a, b]) => (a === FIRST_ADOPTER ? b : a))
    expect([...res.body.neighbours].sort()).toEqual([...new Set(neighbours)].sort())
    expect(res.body.pool.some((c: string) => neighbours.includes(c))).toBe(false)
    expect(threats[6]!.figures.neighbours).toBe(new Set(neighbours).size)
    // one release only in the demo: nothing was revised
    expect(threats[3]!.figures.revisedCells).toBe(0)
  })

  it('goes into the run\'s workbook as the "Threat evidence" sheet', async () => {
    const run = await analyst.post(`/api/studies/${id}/runs`, { design: 'did' })
    expect(run.status, JSON.stringify(run.body)).toBe(201)
    const res = await reviewer.raw(`/api/studies/${id}/runs/${run.body.id}/workbook`)
    expect(res.status).toBe(200)
    const wb = new ExcelJS.Workbook()
    await wb.xlsx.load(await res.arrayBuffer())
    const ws = wb.getWorksheet('Threat evidence')!
    const rows = Array.from({ length: 7 }, (_, i) => (ws.getRow(i + 2).values as unknown[]).slice(1, 3))
    expect(rows.map(r => r[0])).toEqual(['History', 'Maturation', 'Testing', 'Instrumentation', 'Regression to the mean', 'Selection', 'Diffusion or spillover'])
    for (const r of rows) expect(['supports the estimate', 'weakens the estimate', 'cannot tell']).toContain(r[1])
    const report = await reviewer.get(`/api/studies/${id}/runs/${run.body.id}/report`)
    expect(report.body.threatEvidence.threats).toHaveLength(7)
  })
})

describe('revisions between releases', () => {
  it('a treated value revised by 10% in a later release shows as a revision and weakens the estimate', async () => {
    const f = await studyWithRuns()
    const before = (await f.reviewer.get(`/api/studies/${f.studyId}/evidence`)).body.threats[3]
    expect(before.figures).toMatchObject({ cellsInSeveralReleases: 0, revisedCells: 0 })
    const [{ source_id: sourceId }] = await sql('SELECT source_id FROM source_releases WHERE id = $1', [f.releaseId])
    const old = f.csvRows.get(`${f.codes.treated}|2003`)!
    const unchanged = f.csvRows.get(`${f.codes.comparison[0]}|2003`)!
    const csv = `code,year,deaths\n${f.codes.treated},2003,${old.outcome * 1.1}\n${f.codes.comparison[0]},2003,${unchanged.outcome}\n`
    await importCsv(f.analyst, sourceId, csv, { layout: 'long', jurisdiction: 'code', period: 'year', values: { deaths: f.outcome } }, 'revised edition')
    const after = (await f.reviewer.get(`/api/studies/${f.studyId}/evidence`)).body.threats[3]
    expect(after.figures.cellsInSeveralReleases).toBe(2)
    expect(after.figures.revisedCells).toBe(1)
    expect(after.figures.revisedTreatedCells).toBe(1)
    expect(after.figures.maxRelativeRevision).toBeCloseTo(0.1, 10)
    expect(after.verdict).toBe('weakens')
    expect(after.figure).toMatch(/1 of 2 values published in several releases were revised/)
  })
})
