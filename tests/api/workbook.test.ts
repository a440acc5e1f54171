/**
 * The estimates workbook downloaded from a run, opened with exceljs: every sheet holds what
 * it should, numbers equal the run's result, the panel rows equal the uploaded data the run
 * used, and text starting with = is stored as text, never as a formula.
 */
import ExcelJS from 'exceljs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { anonymous } from '../support/http'
import { closePool, sql } from '../support/db'
import { type StudyFixture, studyWithRuns } from '../support/studyFixture'

let f: StudyFixture
let wb: ExcelJS.Workbook
let headers: Headers

const QUESTION = '=HYPERLINK("http://attacker.test","Did the rule work?")'
const REASON = '+adopted a similar rule in 2006'

beforeAll(async () => {
  f = await studyWithRuns({ question: QUESTION, excludedReason: REASON })
  const res = await f.reviewer.raw(`/api/studies/${f.studyId}/runs/${f.runs.event.id}/workbook`)
  expect(res.status, await res.clone().text()).toBe(200)
  headers = res.headers
  wb = new ExcelJS.Workbook()
  await wb.xlsx.load(await res.arrayBuffer())
})
afterAll(closePool)

function rowsOf(name: string): ExcelJS.CellValue[][] {
  const out: ExcelJS.CellValue[][] = []
  wb.getWorksheet(name)!.eachRow((row, i) => {
    if (i > 1) out.push((row.values as ExcelJS.CellValue[]).slice(1))
  })
  return out
}

function summary(label: string): ExcelJS.Cell {
  const ws = wb.getWorksheet('Summary')!
  for (let i = 1; i <= ws.rowCount; i++) if (ws.getRow(i).getCell(1).value === label) return ws.getRow(i).getCell(2)
  throw new Error(`no summary row ${label}`)
}

describe('workbook download', () => {
  it('is an .xlsx attachment', () => {
    expect(headers.get('content-type')).toBe('application/vnd.openxmlformats-officedocument.spreadsheetml.sheet')
    expect(headers.get('content-disposition')).toMatch(/^attachment; filename="helmet-rule-[a-z0-9-]+-v1-run\d+-estimates\.xlsx"$/)
  })

  it('holds every sheet with a frozen header row', () => {
    expect(wb.worksheets.map(w => w.name)).toEqual(['Summary', 'Coefficients', 'Inference', 'Weighted comparison', 'Group-time', 'Decomposition', 'Event study', 'Pre-trend tests', 'Donor pool', 'Panel rows', 'Robustness', 'Validity', 'Threat evidence', 'Provenance'])
    for (const ws of wb.worksheets) expect(ws.views[0], ws.name).toMatchObject({ state: 'frozen', ySplit: 1 })
  })

  it('summary numbers equal the run result', () => {
    const e = f.runs.event.result.effect
    expect(summary('Effect estimate').value).toBe(e.estimate)
    expect(summary('Standard error (analytic)').value).toBe(e.se)
    expect(summary('95% interval, low').value).toBe(e.ciLow ?? 'unbounded')
    expect(summary('95% interval, high').value).toBe(e.ciHigh ?? 'unbounded')
    expect(summary('p-value').value).toBe(e.p)
    expect(summary('Why this method').value).toBe(f.runs.event.result.inference.reason)
    expect(summary('p-value').type).toBe(ExcelJS.ValueType.Number)
    expect(summary('Observations').value).toBe(f.runs.event.result.nObs)
    expect(summary('Treated units').value).toBe(f.codes.treated)
    expect(summary('Policy start').value).toBe('2007')
  })

  it('coefficients, event study and pre-trend tests equal the result', () => {
    const r = f.runs.event.result
    const coef = rowsOf('Coefficients')
    expect(coef.map(c => c[0])).toEqual(Object.keys(r.coefficients))
    for (const row of coef) {
      const c = r.coefficients[row[0] as string]
      expect(row.slice(2)).toEqual([c.estimate, c.se, c.seIid, c.t, c.df, c.p, c.ciLow, c.ciHigh])
    }
    const es = rowsOf('Event study')
    expect(es.map(e => e.slice(0, 5))).toEqual(r.eventStudy.map((e: any) => [e.relTime, e.estimate, e.se, e.ciLow, e.ciHigh]))
    const pre = rowsOf('Pre-trend tests')
    expect(pre[0]![1]).toBe(r.preTrend.wald.F)
    expect(pre[0]![4]).toBe(r.preTrend.wald.p)
  })

  it('panel rows equal the uploaded data for the units the run used', () => {
    const rows = rowsOf('Panel rows')
    const used = [f.codes.treated, ...f.codes.comparison].sort()
    expect(new Set(rows.map(r => r[0]))).toEqual(new Set(used))
    expect(rows).toHaveLength(used.length * 12)
    expect(rows.length).toBe(f.runs.event.result.nObs)
    const header = (wb.getWorksheet('Panel rows')!.getRow(1).values as string[]).slice(1)
    expect(header[3]).toContain(f.outcome)
    expect(header[4]).toContain(f.covariate)
    for (const [code, period, role, outcome, covariate] of rows) {
      const uploaded = f.csvRows.get(`${code}|${period}`)!
      expect(outcome, `${code} ${period}`).toBe(uploaded.outcome)
      expect(covariate, `${code} ${period}`).toBe(uploaded.covariate)
      expect(role).toBe(code === f.codes.treated ? 'treated' : 'comparison')
    }
  })

  it('donor pool, validity and provenance', async () => {
    const pool = rowsOf('Donor pool')
    const excluded = pool.find(p => p[0] === f.codes.excluded)!
    expect(excluded[1]).toBe('excluded')
    expect(rowsOf('Validity').map(v => v[0])).toEqual(['History', 'Maturation', 'Testing', 'Instrumentation', 'Regression to the mean', 'Selection', 'Diffusion or spillover'])
    const [release] = await sql('SELECT checksum FROM source_releases WHERE id = $1', [f.releaseId])
    const prov = wb.getWorksheet('Provenance')!
    expect(prov.getRow(2).getCell(1).value).toBe(f.releaseId)
    expect(prov.getRow(2).getCell(8).value).toBe(release.checksum)
    const kv = new Map<string, unknown>()
    prov.eachRow(r => kv.set(String(r.getCell(1).value), r.getCell(2).value))
    expect(kv.get('Data fingerprint')).toBe(f.runs.event.fingerprint)
    expect(JSON.parse(String(kv.get('Spec (JSON)')))).toEqual(f.runs.event.spec)
    expect(String(kv.get('Run by'))).toContain('analyst@counterpart.test')
    expect(String(kv.get('Software'))).toMatch(/^Counterpart \d+\.\d+\.\d+$/)
  })

  it('stores text starting with = or + as text, never a formula', () => {
    const q = summary('Question')
    expect(q.type).toBe(ExcelJS.ValueType.String)
    expect(q.formula).toBeUndefined()
    expect(q.value).toBe(`'${QUESTION}`)
    const reason = rowsOf('Donor pool').find(p => p[0] === f.codes.excluded)![2]
    expect(reason).toBe(`'${REASON}`)
    for (const ws of wb.worksheets) ws.eachRow(row => row.eachCell(cell => expect(cell.type, `${ws.name}!${cell.address}`).not.toBe(ExcelJS.ValueType.Formula)))
  })

  it('refuses without a session, and for a run of another study', async () => {
    expect((await anonymous().raw(`/api/studies/${f.studyId}/runs/${f.runs.did.id}/workbook`)).status).toBe(401)
    expect((await f.analyst.raw(`/api/studies/999999/runs/${f.runs.did.id}/workbook`)).status).toBe(404)
  })

  it('finds no run of another study under a study the user may read (404)', async () => {
    const other = await f.analyst.post('/api/studies', { title: `Other study ${f.tag}`, outcome: f.outcome, treated: [f.codes.treated], start: '2007' })
    expect(other.status, JSON.stringify(other.body)).toBe(201)
    const res = await f.analyst.raw(`/api/studies/${other.body.id}/runs/${f.runs.did.id}/workbook`)
    expect(res.status).toBe(404)
    expect((await res.json()).message).toBe(`Study ${other.body.id} has no run ${f.runs.did.id}.`)
  })
})
