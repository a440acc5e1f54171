/**
 * The "Robustness" sheet of the estimates workbook: the newest finished result of each
 * robustness check of the run, each opened by its finding in words (and caution), then one
 * row per item (fake start, placebo unit, donor left out, pool) with its estimate and, where
 * there is one, its interval. Empty checks say so. Pure: plain objects in, rows out.
 */
import type ExcelJS from 'exceljs'
import { ROBUSTNESS_KINDS, ROBUSTNESS_LABELS, type RobustnessKind, type RobustnessResult } from '../../../shared/engine/robustness'
import { guardFormula } from '../../../shared/delivery/formulaGuard'
import { ROBUSTNESS_CAUTIONS, robustnessWords } from '../../../shared/utils/robustnessSummary'

export interface WorkbookRobustness {
  id: number
  kind: RobustnessKind
  fingerprint: string | null
  createdAt: Date | string
  result: RobustnessResult
}

type Row = [string, string, number | null, number | null, number | null, string | null]

/** The sheet's rows (without the header): pure, so tests read them directly. */
export function robustnessRows(checks: readonly WorkbookRobustness[]): Row[] {
  const out: Row[] = []
  const newest = new Map<RobustnessKind, WorkbookRobustness>()
  for (const c of [...checks].sort((a, b) => b.id - a.id)) if (!newest.has(c.kind)) newest.set(c.kind, c)
  if (!newest.size) out.push(['', 'No robustness check of this run has finished.', null, null, null, 'Run them on the Robustness step.'])
  for (const kind of ROBUSTNESS_KINDS) {
    const c = newest.get(kind)
    if (!c) continue
    const label = ROBUSTNESS_LABELS[kind]
    const words = robustnessWords(c.result)
    out.push([label, 'Finding', null, null, null, words.finding])
    if (words.caution) out.push([label, 'Caution', null, null, null, words.caution])
    out.push([label, `Check #${c.id}, data fingerprint`, null, null, null, c.fingerprint])
    const r = c.result
    if (r.kind === 'placebo_time') {
      out.push([label, `Actual start ${r.actual.start}`, r.actual.estimate, null, null, null])
      for (const f of r.fakes) out.push([label, `Fake start ${f.start}`, f.estimate, null, null, f.note])
    }
    else if (r.kind === 'placebo_space') {
      out.push([label, 'Treated (actual)', r.actual, r.ciLow, r.ciHigh, `p = ${r.p}`])
      for (const p of r.placebos) out.push([label, `Placebo ${p.unit}`, p.estimate, null, null, p.ratio === null ? null : `post/pre fit ratio ${p.ratio}`])
    }
    else if (r.kind === 'leave_one_out') {
      out.push([label, 'Every donor', r.full, null, null, null])
      for (const x of r.rows) out.push([label, `Without ${x.unit}`, x.estimate, null, null, x.note ?? (r.mostInfluential.includes(x.unit) ? 'among the donors that move it most' : null)])
    }
    else {
      for (const p of r.pools) out.push([label, `${p.label} (${p.units.length} jurisdictions)`, p.estimate, p.ciLow, p.ciHigh, p.note])
    }
  }
  for (const caution of ROBUSTNESS_CAUTIONS) out.push(['Caution', '', null, null, null, caution])
  return out
}

/** Adds the sheet to a streaming workbook; the caller commits it. */
export function robustnessSheet(wb: ExcelJS.stream.xlsx.WorkbookWriter, checks: readonly WorkbookRobustness[]): ExcelJS.Worksheet {
  const ws = wb.addWorksheet('Robustness', { views: [{ state: 'frozen', ySplit: 1 }] })
  const formats = [null, null, '0.0000', '0.0000', '0.0000', null]
  ws.columns = [22, 42, 14, 14, 14, 90].map((width, i) => ({ width, style: formats[i] ? { numFmt: formats[i]! } : {} }))
  const head = ws.addRow(['Check', 'Row', 'Estimate', 'Interval low', 'Interval high', 'Note'])
  head.font = { bold: true }
  head.eachCell((cell) => {
    cell.numFmt = 'General'
    cell.border = { bottom: { style: 'thin' } }
  })
  head.commit()
  for (const r of robustnessRows(checks)) {
    const row = ws.addRow(r.map(v => (typeof v === 'number' ? (Number.isFinite(v) ? v : null) : v === null ? null : guardFormula(v))))
    row.alignment = { wrapText: true, vertical: 'top' }
    row.commit()
  }
  return ws
}
