/**
 * The study workbook (exceljs): every stored run of a study side by side, for a reader who
 * wants the whole record rather than one run.
 *   const buffer = await buildStudyBook(input)
 * Pure: takes plain objects (studyBookLoad.ts gathers them), touches no database.
 *
 * Sheets: Summary (the study, its cautions), Runs (one row per run: design, effect, interval,
 * p-value and method, sizes, fingerprint, warnings), Coefficients (every run's every term, one
 * row each), Donor pool (as decided now), Validity. Text is guarded against formulas exactly as
 * in the run workbook (build.ts).
 */
import type { EstimateResult } from '../../../shared/engine/result'
import { STANDING_CAUTIONS } from '../../../shared/delivery/cautions'
import { designLabel } from '../../../shared/delivery/labels'
import { inferenceText } from '../../../shared/delivery/inference'
import { warningText } from '../../../shared/delivery/warnings'
import {
  type Book, type CellValue, FORMATS, VCOV_LABELS, type WorkbookInput, type WorkbookPoolRow, type WorkbookValidityNote,
  TEST_COLUMNS, donorPool, line, runTermLabels, safeText, studyFacts, summarySheet, table, validity, writeBook,
} from './build'

export interface StudyBookRun {
  id: number
  design: string
  spec: Record<string, unknown>
  fingerprint: string
  result: EstimateResult
  createdAt: Date | string
  createdBy: string | null
}

export interface StudyBookInput {
  study: WorkbookInput['study']
  /** Newest first, as the Estimates step lists them. */
  runs: StudyBookRun[]
  pool: WorkbookPoolRow[]
  validity: WorkbookValidityNote[]
  software: { name: string, version: string }
  generated: { at: Date, by: string }
}

export const STUDY_SHEETS = ['Summary', 'Runs', 'Coefficients', 'Donor pool', 'Validity'] as const

const iso = (d: Date | string | null) => (d == null ? null : new Date(d).toISOString())

const labelsOf = (study: StudyBookInput['study'], run: StudyBookRun) => runTermLabels(run.spec, study)

function summary(wb: Book, input: StudyBookInput) {
  const { study } = input
  const { ws, add } = summarySheet(wb, study.title, 30)
  studyFacts(add, study)
  add('Runs in this workbook', input.runs.length, FORMATS.count)
  add('Workbook made by', input.generated.by)
  add('Workbook made at', input.generated.at.toISOString())
  add('Software', `${input.software.name} ${input.software.version}`)
  line(ws, [])
  line(ws, ['Cautions', null], (head) => { head.font = { bold: true } })
  line(ws, [null, 'Each run\'s own cautions and warnings are in its row of the Runs sheet and in its run workbook.'], (row) => { row.getCell(2).alignment = { wrapText: true } })
  for (const c of STANDING_CAUTIONS) line(ws, [null, safeText(c)], (row) => { row.getCell(2).alignment = { wrapText: true, vertical: 'top' } })
  ws.commit()
}

/** One row per run: what a reader compares across runs. */
function runs(wb: Book, input: StudyBookInput) {
  return table(wb, 'Runs', [
    { header: 'Run', width: 8, format: FORMATS.count },
    { header: 'Design', width: 34 },
    { header: 'Run at', width: 24 },
    { header: 'Run by', width: 26 },
    { header: 'Effect term', width: 34 },
    { header: 'Estimate', width: 14, format: FORMATS.estimate },
    { header: 'Standard error (analytic)', width: 16, format: FORMATS.estimate },
    { header: 'Standard errors', width: 28 },
    { header: 'Interval, low', width: 14, format: FORMATS.estimate },
    { header: 'Interval, high', width: 14, format: FORMATS.estimate },
    { header: 'p-value', width: 10, format: FORMATS.p },
    { header: 'Interval and p-value from', width: 30 },
    { header: 'Observations', width: 14, format: FORMATS.count },
    { header: 'Units', width: 8, format: FORMATS.count },
    { header: 'Periods', width: 9, format: FORMATS.count },
    { header: 'Clusters', width: 9, format: FORMATS.count },
    { header: 'Data fingerprint', width: 20 },
    { header: 'Warnings', width: 80 },
  ], input.runs.map((run) => {
    const r = run.result
    return [
      run.id, designLabel(run.design), iso(run.createdAt), run.createdBy ?? 'unknown',
      labelsOf(input.study, run)[r.effect.term] ?? r.effect.term,
      r.effect.estimate, r.effect.se, VCOV_LABELS[r.vcov] ?? r.vcov,
      r.effect.ciLow ?? 'unbounded', r.effect.ciHigh ?? 'unbounded', r.effect.p, inferenceText(r).method,
      r.nObs, r.nUnits, r.nPeriods, r.nClusters ?? null, run.fingerprint.slice(0, 16),
      r.warnings.map(warningText).join(' | '),
    ]
  }), { wrap: true })
}

/** Every coefficient of every run, in long form (one row per run and term). */
function coefficients(wb: Book, input: StudyBookInput) {
  function* rows(): Generator<CellValue[]> {
    for (const run of input.runs) {
      const labels = labelsOf(input.study, run)
      for (const [name, c] of Object.entries(run.result.coefficients)) {
        yield [run.id, designLabel(run.design), name, labels[name] ?? '', c.estimate, c.se, c.t, c.df, c.p, c.ciLow, c.ciHigh]
      }
    }
  }
  return table(wb, 'Coefficients', [
    { header: 'Run', width: 8, format: FORMATS.count },
    { header: 'Design', width: 34 },
    { header: 'Term', width: 24 },
    { header: 'Meaning', width: 44 },
    { header: 'Estimate', width: 14, format: FORMATS.estimate },
    { header: 'Standard error', width: 16, format: FORMATS.estimate },
    ...TEST_COLUMNS,
  ], rows())
}

export async function buildStudyBook(input: StudyBookInput): Promise<Buffer> {
  return writeBook({ creator: `${input.software.name} ${input.software.version}`, created: input.generated.at }, (wb) => {
    summary(wb, input)
    const ws = runs(wb, input)
    if (!input.runs.length) line(ws, ['No runs yet: run an estimate on the Estimates step.'])
    ws.commit()
    coefficients(wb, input).commit()
    donorPool(wb, input.pool).commit()
    validity(wb, input.validity).commit()
  })
}

/** A file name for the download: study title and version, in safe characters. */
export function studyBookFileName(title: string, version: number): string {
  const slug = title.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-|-$/g, '').slice(0, 60) || 'study'
  return `${slug}-v${version}-all-runs.xlsx`
}
