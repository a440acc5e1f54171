/**
 * The workbook's "Threat evidence" sheet: for each threat to validity the computed verdict in
 * plain words, the figure behind it, the explanation, the rule, and the numbers by name
 * (server/engine/threats, gathered by services/validity/evidence.ts). The evidence is computed
 * from the study's data and pool when the workbook is made (not from the run's frozen rows),
 * and is a starting point for the analyst's assessment on the Validity sheet; the sheet says both.
 * Text cells are guarded against formula reading like every other sheet.
 */
import type ExcelJS from 'exceljs'
import { guardFormula } from '../../../shared/delivery/formulaGuard'
import { VERDICT_WORDS, type ThreatEvidence } from '../../../shared/engine/threats'
import { THREATS } from '../../../shared/schemas/validity'

export const THREAT_EVIDENCE_SHEET = 'Threat evidence'

/** What the workbook input carries: the evidence, or why there is none. */
export type WorkbookThreatEvidence = { threats: ThreatEvidence[], computedAt: Date | string, note: string } | { threats: null, reason: string }

const text = (v: string) => guardFormula(v)
const figuresText = (f: Record<string, number | null>) => Object.entries(f).map(([k, v]) => `${k} = ${v === null || !Number.isFinite(v) ? 'n/a' : Number(v.toPrecision(6))}`).join('; ')

export function threatEvidenceSheet(wb: ExcelJS.stream.xlsx.WorkbookWriter, evidence: WorkbookThreatEvidence | null | undefined): ExcelJS.Worksheet {
  const ws = wb.addWorksheet(THREAT_EVIDENCE_SHEET, { views: [{ state: 'frozen', ySplit: 1 }] })
  ws.columns = [{ width: 24 }, { width: 22 }, { width: 60 }, { width: 60 }, { width: 60 }, { width: 60 }]
  const head = ws.addRow(['Threat', 'Computed verdict', 'Figure', 'Explanation', 'Rule', 'Numbers'])
  head.font = { bold: true }
  head.eachCell((c) => {
    c.border = { bottom: { style: 'thin' } }
  })
  head.commit()
  const wrap: Partial<ExcelJS.Alignment> = { wrapText: true, vertical: 'top' }
  if (!evidence || evidence.threats === null) {
    const row = ws.addRow(['Not computed', null, text(evidence?.threats === null ? evidence.reason : 'The evidence was not computed for this workbook.')])
    row.alignment = wrap
    row.commit()
    return ws
  }
  const byThreat = new Map(evidence.threats.map(e => [e.threat, e]))
  for (const t of THREATS) {
    const e = byThreat.get(t.key)
    const row = ws.addRow(e
      ? [t.label, VERDICT_WORDS[e.verdict], text(e.figure), text(e.explanation), text(e.rule), text(figuresText(e.figures))]
      : [t.label, 'not computed', null, null, null, null])
    row.alignment = wrap
    row.commit()
  }
  ws.addRow([]).commit()
  const at = evidence.computedAt instanceof Date ? evidence.computedAt.toISOString() : evidence.computedAt
  for (const [k, v] of [['Computed at', at], ['Computed from', 'the study\'s data and pool when the workbook was made, not the run\'s frozen rows'], ['Read as', evidence.note]] as const) {
    const row = ws.addRow([k, text(v)])
    row.getCell(1).font = { bold: true }
    row.commit()
  }
  return ws
}
