/**
 * The study workbook, read back with exceljs: one Runs row per run with the engine's numbers,
 * every coefficient of every run, the pool and validity sheets, warnings in plain words with
 * their detail, text guarded against formulas, and a study without runs that says so.
 * Invented panel (six units, 2001..2010, AA treated from 2006 with an effect of -3): the
 * expected values are the engine's own results on it, so the check is that nothing is lost
 * or reordered on the way into the file.
 */
import ExcelJS from 'exceljs'
import { describe, expect, it } from 'vitest'
import { estimate } from '../../../../server/engine'
import { buildStudyBook, STUDY_SHEETS, type StudyBookInput, studyBookFileName } from '../../../../server/services/workbook/studyBook'

function rows() {
  const out: { unit: string, period: string, deaths: number }[] = []
  ;['AA', 'BB', 'CC', 'DD', 'EE', 'FF'].forEach((unit, u) => {
    for (let year = 2001; year <= 2010; year++) {
      const t = year - 2001
      out.push({ unit, period: String(year), deaths: 20 + u * 2 + 0.5 * t + ((u * 7 + t * 3) % 5) * 0.3 + (unit === 'AA' && year >= 2006 ? -3 : 0) })
    }
  })
  return out.map(r => ({ unit: r.unit, period: r.period, values: { outcome: r.deaths } }))
}

function input(withRuns = true): StudyBookInput {
  const data = rows()
  const specs = [
    { design: 'its' as const, outcome: 'outcome', treated: ['AA'], start: '2006', its: { comparison: 'none' as const }, inference: { method: 'analytic' as const } },
    { design: 'did' as const, outcome: 'outcome', treated: ['AA'], start: '2006', inference: { method: 'analytic' as const } },
  ]
  const runs = withRuns
    ? specs.map((spec, i) => ({ id: 20 - i, design: spec.design, spec, fingerprint: 'e'.repeat(64), result: estimate({ rows: data }, spec), createdAt: new Date('2026-11-30T10:00:00Z'), createdBy: 'Ana Lyst' }))
    : []
  return {
    study: { id: 7, title: '=Helmet rule', question: 'Did it work?', outcome: 'deaths', outcomeLabel: 'Road deaths', transform: 'level', treated: ['AA'], start: '2006', window: null, covariates: [], status: 'draft', version: 3 },
    runs,
    pool: [{ jurisdiction: 'BB', included: false, reason: '-a road rebuilt', rank: 1, rmspe: 0.5, rmspeDemeaned: 0.2, correlation: 0.98, slopeDiff: 0.01, covariateDistance: null, missingShare: 0, exclusions: [] }],
    validity: [{ threat: 'history', assessment: 'partly', note: 'a campaign in 2006', evidence: [] }],
    software: { name: 'Counterpart', version: '0.1.0' },
    generated: { at: new Date('2026-12-01T12:00:00Z'), by: 'Ana Lyst' },
  }
}

async function open(data: StudyBookInput) {
  const wb = new ExcelJS.Workbook()
  await wb.xlsx.load(await buildStudyBook(data) as unknown as ArrayBuffer)
  return wb
}

function body(ws: ExcelJS.Worksheet): ExcelJS.CellValue[][] {
  const out: ExcelJS.CellValue[][] = []
  ws.eachRow((row, i) => { if (i > 1) out.push((row.values as ExcelJS.CellValue[]).slice(1)) })
  return out
}

describe('study workbook', () => {
  it('holds every run and every coefficient with the engine\'s numbers', async () => {
    const data = input()
    const wb = await open(data)
    expect(wb.worksheets.map(w => w.name)).toEqual([...STUDY_SHEETS])
    const runs = body(wb.getWorksheet('Runs')!)
    expect(runs.map(r => r[0])).toEqual([20, 19])
    data.runs.forEach((run, i) => {
      expect(runs[i]![5]).toBe(run.result.effect.estimate)
      expect(runs[i]![12]).toBe(run.result.nObs)
    })
    // the single series has no clusters: the cell stays empty rather than showing a count
    expect(runs[0]![15] ?? null).toBeNull()
    // its warnings in plain words, the technical text kept as the detail
    // 10 periods: floor(4 (10/100)^(2/9)) = floor(2.398) = 2
    expect(String(runs[0]![17])).toContain('The standard errors allow each period to be related to the 2 periods before it')
    expect(String(runs[0]![17])).toContain('[Detail: its.hacLag not given: Newey-West lag 2 from the rule of thumb floor(4 (N/100)^(2/9)) with N = 10.')
    const coefs = body(wb.getWorksheet('Coefficients')!)
    const expected = data.runs.flatMap(run => Object.entries(run.result.coefficients).map(([term, c]) => [run.id, term, c.estimate]))
    expect(coefs.map(r => [r[0], r[2], r[4]])).toEqual(expected)
  })

  it('guards text against formulas and keeps the pool and validity sheets', async () => {
    const wb = await open(input())
    expect(wb.getWorksheet('Summary')!.getRow(1).getCell(1).value).toBe('\'=Helmet rule')
    expect(body(wb.getWorksheet('Donor pool')!)[0]!.slice(0, 3)).toEqual(['BB', 'excluded', '\'-a road rebuilt'])
    expect(body(wb.getWorksheet('Validity')!).find(r => r[0] === 'History')?.[1]).toBeTruthy()
  })

  it('says so when the study has no runs yet', async () => {
    const wb = await open(input(false))
    expect(body(wb.getWorksheet('Runs')!)).toEqual([['No runs yet: run an estimate on the Estimates step.']])
    expect(body(wb.getWorksheet('Coefficients')!)).toEqual([])
    expect(studyBookFileName('Helmet rule: 2006!', 3)).toBe('helmet-rule-2006-v3-all-runs.xlsx')
  })
})
