/**
 * The study workbook and the workspace's checks over HTTP, on the invented study of
 * tests/support/studyFixture.ts (two runs): the workbook holds every run's summary and
 * coefficients equal to the stored results, the pool with its reasons and the validity sheet;
 * excluding a donor without a reason is refused with a message; the Trends step's event window
 * is chosen by query and refused when it makes no sense.
 */
import ExcelJS from 'exceljs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client } from '../support/http'
import { closePool, sql } from '../support/db'
import { type StudyFixture, studyWithRuns } from '../support/studyFixture'

let f: StudyFixture
const REASON = '=adopted a similar rule in 2006'

beforeAll(async () => {
  f = await studyWithRuns({ excludedReason: REASON })
})
afterAll(closePool)

function rowsOf(wb: ExcelJS.Workbook, name: string): ExcelJS.CellValue[][] {
  const out: ExcelJS.CellValue[][] = []
  wb.getWorksheet(name)!.eachRow((row, i) => {
    if (i > 1) out.push((row.values as ExcelJS.CellValue[]).slice(1))
  })
  return out
}

describe('the study workbook', () => {
  let wb: ExcelJS.Workbook

  beforeAll(async () => {
    const res = await f.reviewer.raw(`/api/studies/${f.studyId}/workbook`)
    expect(res.status, await res.clone().text()).toBe(200)
    expect(res.headers.get('content-type')).toContain('spreadsheetml')
    expect(res.headers.get('content-disposition')).toMatch(/attachment; filename=".*-v1-all-runs\.xlsx"/)
    wb = new ExcelJS.Workbook()
    await wb.xlsx.load(await res.arrayBuffer())
  })

  it('has the summary, runs, coefficients, pool and validity sheets', () => {
    expect(wb.worksheets.map(w => w.name)).toEqual(['Summary', 'Runs', 'Coefficients', 'Donor pool', 'Validity'])
  })

  it('lists every run, newest first, with the stored estimate, p-value and sizes', () => {
    const runs = rowsOf(wb, 'Runs')
    expect(runs.map(r => r[0])).toEqual([f.runs.event.id, f.runs.did.id])
    for (const [row, run] of [[runs[0]!, f.runs.event], [runs[1]!, f.runs.did]] as const) {
      expect(row[5]).toBeCloseTo(run.result.effect.estimate, 12)
      expect(row[10]).toBeCloseTo(run.result.effect.p, 12)
      expect(row[12]).toBe(run.result.nObs)
      expect(row[13]).toBe(run.result.nUnits)
    }
  })

  it('holds every coefficient of every run, equal to the stored results', () => {
    const coefs = rowsOf(wb, 'Coefficients')
    const expected = [f.runs.event, f.runs.did].flatMap(run => Object.entries(run.result.coefficients as Record<string, { estimate: number }>).map(([term, c]) => ({ run: run.id, term, estimate: c.estimate })))
    expect(coefs).toHaveLength(expected.length)
    for (const e of expected) {
      const row = coefs.find(r => r[0] === e.run && r[2] === e.term)
      expect(row, `${e.run} ${e.term}`).toBeDefined()
      expect(row![4]).toBeCloseTo(e.estimate, 12)
    }
  })

  it('shows the pool with the exclusion reason as text, never as a formula', () => {
    const pool = rowsOf(wb, 'Donor pool')
    const excluded = pool.find(r => r[0] === f.codes.excluded)!
    expect(excluded[1]).toBe('excluded')
    expect(excluded[2]).toBe(`'${REASON}`)
    for (const code of f.codes.comparison) expect(pool.find(r => r[0] === code)?.[1]).toBe('included')
    expect(rowsOf(wb, 'Validity').length).toBeGreaterThan(0)
  })

  it('is audit-logged, and refused without a session or for an unknown study', async () => {
    const [logged] = await sql(`SELECT after FROM audit_log WHERE action = 'export.study_workbook' AND entity_id = $1 ORDER BY id DESC LIMIT 1`, [String(f.studyId)])
    expect(logged?.after).toMatchObject({ runs: 2 })
    expect((await new Client().raw(`/api/studies/${f.studyId}/workbook`)).status).toBe(401)
    const missing = await f.reviewer.get('/api/studies/999999999/workbook')
    expect(missing.status).toBe(404)
    expect(missing.body.message).toBe('No study with id 999999999.')
    const bad = await f.reviewer.get('/api/studies/abc/workbook')
    expect(bad.status).toBe(400)
  })
})

describe('excluding a donor needs a reason', () => {
  it('refuses an exclusion without a reason, naming the jurisdiction, and changes nothing', async () => {
    const donor = f.codes.comparison[0]!
    for (const reason of [undefined, null, '', '   ']) {
      const res = await f.analyst.put(`/api/studies/${f.studyId}/pool`, { decisions: [{ jurisdiction: donor, included: false, ...(reason === undefined ? {} : { reason }) }] })
      expect(res.status).toBe(400)
      expect(res.body.message).toContain(`Excluding a jurisdiction needs a reason: say why ${donor} is left out of the pool.`)
      expect(res.body.data.issues[0]).toMatchObject({ path: 'decisions.0.reason' })
    }
    const [stored] = await sql(`SELECT d.included FROM study_pool_decisions d JOIN jurisdictions j ON j.id = d.jurisdiction_id WHERE d.study_id = $1 AND j.code = $2`, [f.studyId, donor])
    expect(stored).toEqual({ included: true })
  })

  it('accepts the exclusion with a reason, and an inclusion without one', async () => {
    const donor = f.codes.comparison[0]!
    const out = await f.analyst.put(`/api/studies/${f.studyId}/pool`, { decisions: [{ jurisdiction: donor, included: false, reason: 'a road rebuilt in 2008' }] })
    expect(out.status).toBe(200)
    const back = await f.analyst.put(`/api/studies/${f.studyId}/pool`, { decisions: [{ jurisdiction: donor, included: true }] })
    expect(back.status).toBe(200)
  })
})

describe('the event window on the Trends step', () => {
  it('follows the data by default and takes a chosen window', async () => {
    const auto = await f.reviewer.get(`/api/studies/${f.studyId}/trends`)
    expect(auto.status).toBe(200)
    expect(auto.body.eventWindow).not.toBeNull()
    const chosen = await f.reviewer.get(`/api/studies/${f.studyId}/trends?from=-3&to=2`)
    expect(chosen.status).toBe(200)
    expect(chosen.body.eventWindow).toEqual({ from: -3, to: 2 })
    // binned ends: -3 and earlier, -2, (-1 reference), 0, 1, 2 and later
    expect(chosen.body.eventStudy.map((p: { relTime: number }) => p.relTime)).toEqual([-3, -2, -1, 0, 1, 2])
  })

  it('refuses half a window, a window without leads, and text, with a message', async () => {
    const half = await f.reviewer.get(`/api/studies/${f.studyId}/trends?from=-3`)
    expect(half.status).toBe(400)
    expect(half.body.message).toContain('Give both ends of the event window')
    const noLeads = await f.reviewer.get(`/api/studies/${f.studyId}/trends?from=-1&to=3`)
    expect(noLeads.status).toBe(400)
    expect(noLeads.body.message).toContain('-1 is the reference period')
    const text = await f.reviewer.get(`/api/studies/${f.studyId}/trends?from=soon&to=3`)
    expect(text.status).toBe(400)
    expect(text.body.message).toContain('from is a whole number of periods')
  })
})
