/** The estimates workbook, read back with exceljs: each sheet holds the run's numbers and data. */
import ExcelJS from 'exceljs'
import { describe, expect, it } from 'vitest'
import { estimate } from '../../../../server/engine'
import { buildWorkbook, safeText, SHEETS, type WorkbookInput, workbookFileName } from '../../../../server/services/workbook/build'
import { STANDING_CAUTIONS } from '../../../../shared/delivery/cautions'

/** Invented demo panel: six units, 2001..2010, unit AA treated from 2006 with an effect of -3. */
function demoRows() {
  const rows: WorkbookInput['rows'] = []
  const units = ['AA', 'BB', 'CC', 'DD', 'EE', 'FF']
  units.forEach((unit, u) => {
    for (let year = 2001; year <= 2010; year++) {
      const t = year - 2001
      const wiggle = ((u * 7 + t * 3) % 5) * 0.3
      const effect = unit === 'AA' && year >= 2006 ? -3 : 0
      rows.push({ unit, period: String(year), values: { deaths: 20 + u * 2 + 0.5 * t + wiggle + effect, income: 30 + u + t * 0.1 } })
    }
  })
  return rows
}

function input(design: 'did' | 'event_study', overrides: Partial<WorkbookInput['study']> = {}, method: 'analytic' | 'auto' = 'analytic'): WorkbookInput {
  const rows = demoRows()
  const inference = { method }
  const spec = design === 'did'
    ? { design, outcome: 'deaths', treated: ['AA'], start: '2006', inference }
    : { design, outcome: 'deaths', treated: ['AA'], start: '2006', eventWindow: { from: -3, to: 3 }, inference }
  const result = estimate({ rows }, spec)
  return {
    study: { id: 7, title: 'Helmet rule and road deaths', question: '=HYPERLINK("http://x.test","click")', outcome: 'deaths', outcomeLabel: 'Road deaths', transform: 'level', treated: ['AA'], start: '2006', window: null, covariates: [], status: 'draft', version: 2, ...overrides },
    run: { id: 41, design, spec, fingerprint: 'f'.repeat(64), result, createdAt: new Date('2026-11-30T10:00:00Z'), createdBy: 'Ana Lyst (analyst@counterpart.test)' },
    pool: [
      { jurisdiction: 'BB', included: true, reason: null, rank: 1, rmspe: 0.5, rmspeDemeaned: 0.2, correlation: 0.98, slopeDiff: 0.01, covariateDistance: null, missingShare: 0, exclusions: [] },
      { jurisdiction: 'GG', included: false, reason: '+adopted a similar rule in 2005', rank: 6, rmspe: 4.1, rmspeDemeaned: 1.1, correlation: 0.4, slopeDiff: 0.3, covariateDistance: null, missingShare: 0.1, exclusions: [{ reason: 'policy', detail: 'adoption 2005' }] },
    ],
    rows,
    validity: [
      { threat: 'history', assessment: 'partly', note: '@enforcement campaign in 2006', evidence: [{ kind: 'run', ref: '41', label: 'main run' }] },
      { threat: 'diffusion', assessment: 'open', note: '-neighbours not yet checked', evidence: [] },
    ],
    releases: [{ id: 3, source: 'Road safety counts', publisher: 'Demo Statistics Office', url: 'https://example.test/roads', licence: 'open', label: '2026 edition', fileName: 'roads.csv', checksum: 'a'.repeat(64), rowCount: 60, importedAt: new Date('2026-11-01T00:00:00Z') }],
    software: { name: 'Counterpart', version: '0.1.0' },
    generated: { at: new Date('2026-12-01T12:00:00Z'), by: 'Ana Lyst' },
  }
}

/** The demo panel as staggered adoption: AA and BB adopt in 2004, CC in 2007; DD, EE and FF never. */
function staggeredInput(): WorkbookInput {
  const base = input('did')
  const start = { AA: '2004', BB: '2004', CC: '2007' }
  const spec = { design: 'staggered' as const, outcome: 'deaths', treated: ['AA', 'BB', 'CC'], start, inference: { method: 'analytic' as const } }
  const result = estimate({ rows: base.rows }, spec)
  return { ...base, study: { ...base.study, treated: spec.treated, start }, run: { ...base.run, design: 'staggered', spec, result } }
}

async function open(data: WorkbookInput) {
  const wb = new ExcelJS.Workbook()
  await wb.xlsx.load(await buildWorkbook(data) as unknown as ArrayBuffer)
  return wb
}

/** Column A label -> column B cell on the Summary sheet. */
function summaryCell(wb: ExcelJS.Workbook, label: string): ExcelJS.Cell {
  const ws = wb.getWorksheet('Summary')!
  for (let i = 1; i <= ws.rowCount; i++) {
    if (ws.getRow(i).getCell(1).value === label) return ws.getRow(i).getCell(2)
  }
  throw new Error(`no summary row "${label}"`)
}

function tableRows(ws: ExcelJS.Worksheet): ExcelJS.CellValue[][] {
  const out: ExcelJS.CellValue[][] = []
  ws.eachRow((row, i) => {
    if (i > 1) out.push((row.values as ExcelJS.CellValue[]).slice(1))
  })
  return out
}

describe('estimates workbook', () => {
  it('inference: the method, its reason and every placebo unit, with an unbounded interval said in words', async () => {
    const data = input('did', {}, 'auto')
    const inf = data.run.result.inference!
    expect(inf.method).toBe('permutation')
    const wb = await open(data)
    expect(summaryCell(wb, 'Interval and p-value from').value).toBe('placebo units')
    expect(summaryCell(wb, '95% interval, low').value).toBe('unbounded')
    expect(String(summaryCell(wb, 'Limits of the method').value)).toMatch(/With 5 placebos no p-value can fall below 0\.167/)
    const rows = tableRows(wb.getWorksheet('Inference')!)
    expect(rows[0]).toEqual(['Method', 'placebo units'])
    expect(rows.find(r => r[0] === 'p-value')![1]).toBe(inf.p)
    const placebos = rows.slice(rows.findIndex(r => r[0] === 'Placebo unit') + 1)
    expect(placebos.map(r => r[0])).toEqual(inf.placebos!.map(p => p.unit))
    expect(placebos.map(r => r[1])).toEqual(inf.placebos!.map(p => p.estimate))
  })

  it('has every sheet, each with a frozen header row', async () => {
    const wb = await open(input('did'))
    expect(wb.worksheets.map(w => w.name)).toEqual([...SHEETS])
    for (const ws of wb.worksheets) {
      expect(ws.views[0], ws.name).toMatchObject({ state: 'frozen', ySplit: 1 })
      expect(ws.getColumn(1).width, ws.name).toBeGreaterThan(8)
    }
  })

  it('summary: the effect, SE, interval and p equal the run result, as number cells with formats', async () => {
    const data = input('did')
    const wb = await open(data)
    const e = data.run.result.effect
    for (const [label, value] of [['Effect estimate', e.estimate], ['Standard error (analytic)', e.se], ['95% interval, low', e.ciLow], ['95% interval, high', e.ciHigh], ['p-value', e.p]] as const) {
      const cell = summaryCell(wb, label)
      expect(cell.type, label).toBe(ExcelJS.ValueType.Number)
      expect(cell.value, label).toBe(value)
      expect(cell.numFmt, label).toMatch(/0\.0000/)
    }
    expect(summaryCell(wb, 'Observations').value).toBe(60)
    expect(summaryCell(wb, 'Treated units').value).toBe('AA')
    expect(summaryCell(wb, 'Policy start').value).toBe('2006')
    expect(summaryCell(wb, 'Periods in the data').value).toBe('2001 to 2010')
    expect(summaryCell(wb, 'Design').value).toBe('Difference-in-differences')
    expect(summaryCell(wb, 'Review').value).toBe('Not approved: these figures may still change')
    const approved = await open(input('did', { status: 'approved', approval: { by: 'Remy Reviewer', at: new Date('2026-12-01T09:00:00Z') } }))
    expect(summaryCell(approved, 'Review').value).toBe('Approved by Remy Reviewer on 2026-12-01T09:00:00.000Z; locked')
    // Cautions: the standing ones, plus the one-treated-unit and few-clusters ones.
    const text: string[] = []
    wb.getWorksheet('Summary')!.eachRow(r => text.push(String(r.getCell(2).value ?? '')))
    for (const c of STANDING_CAUTIONS) expect(text).toContain(c)
    expect(text.some(t => t.startsWith('Only 1 treated unit'))).toBe(true)
    expect(text.some(t => t.includes('6 clusters'))).toBe(true)
  })

  it('coefficients and event-study tables equal the result', async () => {
    const did = input('did')
    const wb = await open(did)
    const coef = tableRows(wb.getWorksheet('Coefficients')!)
    expect(coef.map(r => r[0])).toEqual(Object.keys(did.run.result.coefficients))
    const c = did.run.result.coefficients.treatment!
    expect(coef[0]).toEqual(['treatment', 'Start of the policy (2006): effect', c.estimate, c.se, c.seIid, c.t, c.df, c.p, c.ciLow, c.ciHigh])

    const es = input('event_study')
    const wb2 = await open(es)
    const rows = tableRows(wb2.getWorksheet('Event study')!)
    expect(rows).toHaveLength(es.run.result.eventStudy!.length)
    es.run.result.eventStudy!.forEach((p, i) => {
      expect(rows[i]!.slice(0, 5)).toEqual([p.relTime, p.estimate, p.se, p.ciLow, p.ciHigh])
    })
    const pre = tableRows(wb2.getWorksheet('Pre-trend tests')!)
    expect(pre[0]![1]).toBe(es.run.result.preTrend!.wald!.F)
    expect(pre[0]![4]).toBe(es.run.result.preTrend!.wald!.p)
    expect(pre[1]![1]).toBe(es.run.result.preTrend!.wald!.chi2)
  })

  it('panel rows equal the data used, value for value', async () => {
    const data = input('did')
    const wb = await open(data)
    const ws = wb.getWorksheet('Panel rows')!
    expect((ws.getRow(1).values as unknown[]).slice(1)).toEqual(['Jurisdiction', 'Period', 'Role', 'deaths', 'income'])
    const rows = tableRows(ws)
    expect(rows).toEqual(data.rows.map(r => [r.unit, r.period, r.unit === 'AA' ? 'treated' : 'comparison', r.values.deaths, r.values.income]))
    expect(ws.getRow(2).getCell(4).type).toBe(ExcelJS.ValueType.Number)
  })

  it('donor pool, validity and provenance', async () => {
    const data = input('did')
    const wb = await open(data)
    const pool = tableRows(wb.getWorksheet('Donor pool')!)
    expect(pool[0]!.slice(0, 5)).toEqual(['BB', 'included', undefined, 1, 0.5])
    expect(pool[1]![1]).toBe('excluded')
    expect(pool[1]![10]).toBe('policy: adoption 2005')
    const validity = tableRows(wb.getWorksheet('Validity')!)
    expect(validity).toHaveLength(7)
    expect(validity[0]!.slice(0, 2)).toEqual(['History', 'Partly addressed'])
    expect(validity[0]![3]).toBe('run 41 (main run)')
    expect(validity[1]![1]).toBe('not recorded')
    const prov = wb.getWorksheet('Provenance')!
    expect((prov.getRow(2).values as unknown[]).slice(1, 9)).toEqual([3, 'Road safety counts', 'Demo Statistics Office', 'https://example.test/roads', 'open', '2026 edition', 'roads.csv', 'a'.repeat(64)])
    const kv = new Map<string, unknown>()
    prov.eachRow(r => kv.set(String(r.getCell(1).value), r.getCell(2).value))
    expect(kv.get('Data fingerprint')).toBe('f'.repeat(64))
    expect(kv.get('Software')).toBe('Counterpart 0.1.0')
    expect(kv.get('Run by')).toBe('Ana Lyst (analyst@counterpart.test)')
    expect(kv.get('Run at')).toBe('2026-11-30T10:00:00.000Z')
    expect(JSON.parse(String(kv.get('Spec (JSON)')))).toEqual(data.run.spec)
  })

  it('stores text starting with = + - @ as text, never as a formula', async () => {
    const wb = await open(input('did', { title: '=1+1' }))
    const question = summaryCell(wb, 'Question')
    expect(question.type).toBe(ExcelJS.ValueType.String)
    expect(question.formula).toBeUndefined()
    expect(question.value).toBe('\'=HYPERLINK("http://x.test","click")')
    expect(wb.getWorksheet('Summary')!.getCell('A1').value).toBe('\'=1+1')
    const reason = wb.getWorksheet('Donor pool')!.getRow(3).getCell(3)
    expect(reason.type).toBe(ExcelJS.ValueType.String)
    expect(reason.value).toBe('\'+adopted a similar rule in 2005')
    expect(wb.getWorksheet('Validity')!.getRow(2).getCell(3).value).toBe('\'@enforcement campaign in 2006')
    for (const ws of wb.worksheets) {
      ws.eachRow(row => row.eachCell((cell) => {
        expect(cell.type, `${ws.name}!${cell.address}`).not.toBe(ExcelJS.ValueType.Formula)
      }))
    }
  })

  it('group-time: every cell of a staggered run, then the effects by time since adoption with bands, by cohort and overall', async () => {
    const data = staggeredInput()
    const s = data.run.result.staggered!
    expect(s.groupTime.length).toBeGreaterThan(0)
    const wb = await open(data)
    const rows = tableRows(wb.getWorksheet('Group-time')!)
    const cells = rows.slice(0, s.groupTime.length)
    s.groupTime.forEach((c, i) => {
      expect(cells[i]!.slice(0, 7)).toEqual([c.cohort, c.period, c.relTime, c.att, c.se, c.nCohort, c.nComparison])
      expect(cells[i]![7]).toMatch(c.post ? /^yes$/ : /^no/)
    })
    const relStart = rows.findIndex(r => r[0] === 'Periods since adoption') + 1
    expect(relStart).toBeGreaterThan(s.groupTime.length)
    const byRel = [...s.byRelTime].sort((a, b) => a.relTime - b.relTime)
    byRel.forEach((p, i) => {
      expect(rows[relStart + i]!.slice(0, 3)).toEqual([p.relTime, p.estimate, p.se])
      expect(rows[relStart + i]![3]).toBe(p.bandLow)
      expect(rows[relStart + i]![4]).toBe(p.bandHigh)
    })
    const cohortStart = rows.findIndex(r => r[0] === 'Cohort (adoption period)') + 1
    expect(rows.slice(cohortStart, cohortStart + s.byCohort.length)).toEqual(s.byCohort.map(c => [c.cohort, c.estimate, c.se]))
    expect(rows.find(r => String(r[0]).startsWith('Overall'))!.slice(1)).toEqual([s.overall.estimate, s.overall.se])
    expect(rows.find(r => r[0] === 'Comparison units')![1]).toBe('never treated')
    expect(summaryCell(wb, 'Standard errors').value).toBe('Influence functions (unit sampling)')
    // No decomposition in a staggered run: one plain line.
    expect(tableRows(wb.getWorksheet('Decomposition')!)).toEqual([[expect.stringMatching(/^This run has no decomposition/)]])
  })

  it('decomposition: every two-by-two row, the weights sum and the weighted sum; a plain line where there is none', async () => {
    const data = input('did')
    // Invented rows: weights 0.5 + 0.3 + 0.2 = 1; weighted sum 0.5(-2) + 0.3(-1) + 0.2(1) = -1.1.
    data.run.result = { ...data.run.result, decomposition: [
      { type: 'treated_vs_never', treated: '2004', control: 'never', estimate: -2, weight: 0.5 },
      { type: 'earlier_vs_later', treated: '2004', control: '2007', estimate: -1, weight: 0.3 },
      { type: 'later_vs_earlier', treated: '2007', control: '2004', estimate: 1, weight: 0.2 },
    ] }
    const wb = await open(data)
    const rows = tableRows(wb.getWorksheet('Decomposition')!)
    expect(rows.slice(0, 3)).toEqual([
      ['Adopters against never-treated units', '2004', 'never treated', -2, 0.5],
      ['Earlier adopters against later ones, before those start', '2004', '2007', -1, 0.3],
      ['Later adopters against already-treated earlier ones', '2007', '2004', 1, 0.2],
    ])
    expect(rows.find(r => r[0] === 'Weights sum')![4]).toBeCloseTo(1, 12)
    expect(rows.find(r => r[0] === 'Weighted sum (the two-way estimate)')![3]).toBeCloseTo(-1.1, 12)
    const late = rows.filter(r => r[0] === 'Later adopters against already-treated earlier ones')
    expect(late[1]!.slice(1)).toEqual([1, undefined, 1, 0.2])
    // A did run without varying starts has no group-time cells: one plain line.
    expect(tableRows(wb.getWorksheet('Group-time')!)).toEqual([[expect.stringMatching(/^This run has no group-time effects/)]])
  })

  it('guards only risky text and names the file safely', () => {
    expect(safeText('-3 deaths')).toBe('\'-3 deaths')
    expect(safeText('Road deaths')).toBe('Road deaths')
    expect(workbookFileName('Helmet rule: road deaths!', 2, 41)).toBe('helmet-rule-road-deaths-v2-run41-estimates.xlsx')
  })
})
