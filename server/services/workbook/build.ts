/**
 * The estimates workbook of one run (exceljs): what a budget office receives.
 *   const buffer = await buildWorkbook(input)
 * Pure: takes plain objects (the route gathers them), touches no database. Written with
 * exceljs' streaming writer, row by row, so a panel of hundreds of thousands of rows does
 * not sit in memory as cell objects (strings are written inline, not as shared strings).
 *
 * Sheets: Summary, Coefficients, Inference, Weighted comparison, Group-time (staggered
 * adoption), Decomposition (of a two-way estimate), Event study, Pre-trend tests, Donor pool,
 * Panel rows, Robustness, Validity, Threat evidence, Provenance. Numbers are number cells with number formats; every table has a
 * frozen header row and set column widths.
 *
 * Formula injection: no cell is ever written as a formula. exceljs stores a JavaScript string
 * as a string cell, and on top of that every text cell that starts with = + - @ (or a tab or
 * carriage return) is written with a leading apostrophe ("'=SUM(A1)"), so that even a program
 * that re-reads the text as input (a CSV save, a paste) does not evaluate it.
 */
import { PassThrough } from 'node:stream'
import ExcelJS from 'exceljs'
import type { EstimateResult } from '../../../shared/engine/result'
import { allCautions } from '../../../shared/delivery/cautions'
import { guardFormula } from '../../../shared/delivery/formulaGuard'
import { DECOMPOSITION_LABELS, designLabel } from '../../../shared/delivery/labels'
import { METHOD_LABELS, breaksOfSpec, inferenceText, termLabels } from '../../../shared/delivery/inference'
import { ASSESSMENT_LABELS, THREATS, type Assessment } from '../../../shared/schemas/validity'
import { robustnessSheet, type WorkbookRobustness } from './robustnessSheet'
import { threatEvidenceSheet, type WorkbookThreatEvidence } from './threatEvidenceSheet'

export interface WorkbookPoolRow {
  jurisdiction: string
  included: boolean | null
  reason: string | null
  rank: number | null
  rmspe: number | null
  rmspeDemeaned: number | null
  correlation: number | null
  slopeDiff: number | null
  covariateDistance: number | null
  missingShare: number | null
  exclusions: { reason: string, detail: string }[]
}

export interface WorkbookPanelRow {
  unit: string
  period: string
  values: Record<string, number | null | undefined>
}

export interface WorkbookRelease {
  id: number
  source: string
  publisher: string | null
  url: string | null
  licence: string | null
  label: string | null
  fileName: string | null
  checksum: string | null
  rowCount: number | null
  importedAt: Date | string | null
}

export interface WorkbookValidityNote {
  threat: string
  assessment: Assessment
  note: string
  evidence: { kind: string, ref: string, label?: string }[]
}

export interface WorkbookInput {
  study: {
    id: number
    title: string
    question: string | null
    outcome: string
    outcomeLabel?: string | null
    transform: string
    treated: string[]
    start: string | number | Record<string, string | number>
    window: { pre: [string, string], post: [string, string] } | null
    covariates: string[]
    status: string
    version: number
    /** Dated interventions (adoption, strengthening, repeal), whose labels name the model terms. */
    interventions?: { jurisdiction: string, period: string, label: string }[]
    /** Who approved the study and when (null until approved). */
    approval?: { by: string, at: Date | string } | null
  }
  run: {
    id: number
    design: string
    spec: Record<string, unknown>
    fingerprint: string
    result: EstimateResult
    createdAt: Date | string
    createdBy: string | null
  }
  pool: WorkbookPoolRow[]
  rows: WorkbookPanelRow[]
  /** The value columns of the panel sheet in order, with their headings (default: every key of the rows' values). */
  panelColumns?: { key: string, header: string }[]
  validity: WorkbookValidityNote[]
  /** Finished robustness checks of the run (the Robustness sheet). */
  robustness?: WorkbookRobustness[]
  /** Computed evidence on each threat (threatEvidenceSheet.ts); absent: the sheet says it was not computed. */
  threatEvidence?: WorkbookThreatEvidence | null
  releases: WorkbookRelease[]
  software: { name: string, version: string }
  generated: { at: Date, by: string }
}

export const SHEETS = ['Summary', 'Coefficients', 'Inference', 'Weighted comparison', 'Group-time', 'Decomposition', 'Event study', 'Pre-trend tests', 'Donor pool', 'Panel rows', 'Robustness', 'Validity', 'Threat evidence', 'Provenance'] as const

export const FORMATS = {
  estimate: '0.0000',
  p: '0.0000',
  count: '#,##0',
  value: '#,##0.######',
  share: '0.0%',
  stat: '0.000',
} as const

/** Text for a cell: never read as a formula (see the file comment). */
export const safeText = guardFormula

export type CellValue = string | number | boolean | Date | null | undefined

/** A cell value: finite numbers stay numbers, non-finite ones become empty, text is guarded. */
export function cellValue(v: CellValue): ExcelJS.CellValue {
  if (v === null || v === undefined) return null
  if (typeof v === 'number') return Number.isFinite(v) ? v : null
  if (typeof v === 'boolean' || v instanceof Date) return v
  return safeText(v)
}

export interface Column { header: string, width: number, format?: string }

export type Book = ExcelJS.stream.xlsx.WorkbookWriter
type Sheet = ExcelJS.Worksheet

/** Adds one row, lets the caller style it, and writes it out (a written row cannot change). */
export function line(ws: Sheet, values: ExcelJS.CellValue[], style?: (row: ExcelJS.Row) => void): void {
  const row = ws.addRow(values)
  style?.(row)
  row.commit()
}

const wrapTop: Partial<ExcelJS.Alignment> = { wrapText: true, vertical: 'top' }

/** A sheet with a frozen header row, column widths and number formats; the caller commits it. */
export function table(wb: Book, name: string, columns: Column[], rows: Iterable<CellValue[]>, options: { wrap?: boolean } = {}): Sheet {
  const ws = wb.addWorksheet(name, { views: [{ state: 'frozen', ySplit: 1 }] })
  ws.columns = columns.map(c => ({ width: c.width, style: c.format ? { numFmt: c.format } : {} }))
  line(ws, columns.map(c => c.header), (head) => {
    head.font = { bold: true }
    head.eachCell((cell) => {
      cell.numFmt = 'General'
      cell.border = { bottom: { style: 'thin' } }
    })
  })
  for (const r of rows) line(ws, r.map(cellValue), options.wrap ? (row) => { row.alignment = wrapTop } : undefined)
  return ws
}

/** The policy start as text; a stored "2007" may come back from jsonb as the number 2007. */
export const formatStart = (start: string | number | Record<string, string | number>) =>
  start !== null && typeof start === 'object' ? Object.entries(start).map(([u, p]) => `${u}: ${p}`).join('; ') : String(start)

const iso = (d: Date | string | null) => (d == null ? null : new Date(d).toISOString())


export const VCOV_LABELS: Record<string, string> = {
  cluster: 'Cluster-robust by unit',
  hac: 'Newey-West (autocorrelation-robust)',
  hc1: 'Heteroskedasticity-robust (HC1)',
  iid: 'Classical (iid)',
  influence: 'Influence functions (unit sampling)',
}

/** A Summary sheet: the title row, then label / value rows written by `add`. */
export function summarySheet(wb: Book, title: string, labelWidth: number) {
  const ws = wb.addWorksheet('Summary', { views: [{ state: 'frozen', ySplit: 1 }] })
  ws.columns = [{ width: labelWidth }, { width: 90 }]
  line(ws, [safeText(title), null], (row) => { row.font = { bold: true, size: 14 } })
  const add = (label: string, value: CellValue, format?: string) => line(ws, [label, cellValue(value)], (row) => {
    row.getCell(1).font = { bold: true }
    if (format) row.getCell(2).numFmt = format
    row.getCell(2).alignment = { ...wrapTop, horizontal: 'left' }
  })
  return { ws, add }
}

/** The study's own lines of a Summary (both workbooks): question, version, review, outcome, units, dates. */
export function studyFacts(add: (label: string, value: CellValue) => void, study: WorkbookInput['study'], extra: { run?: number, periods?: string | null } = {}) {
  add('Question', study.question ?? '')
  add('Study', `#${study.id}, version ${study.version} (${study.status.replace('_', ' ')})`)
  add('Review', study.approval ? `Approved by ${study.approval.by} on ${iso(study.approval.at)}; locked` : 'Not approved: these figures may still change')
  if (extra.run !== undefined) add('Run', `#${extra.run}`)
  add('Outcome', study.outcomeLabel ? `${study.outcomeLabel} (${study.outcome})` : study.outcome)
  add('Transform', study.transform)
  add('Treated units', study.treated.join(', '))
  add('Policy start', formatStart(study.start))
  if (extra.periods) add('Periods in the data', extra.periods)
  if (study.window) {
    add('Pre-period', `${study.window.pre[0]} to ${study.window.pre[1]}`)
    add('Post-period', `${study.window.post[0]} to ${study.window.post[1]}`)
  }
}

function periodSpan(rows: WorkbookPanelRow[]): string | null {
  const periods = rows.map(row => String(row.period)).sort()
  return periods.length ? `${periods[0]} to ${periods[periods.length - 1]}` : null
}

function summary(wb: Book, input: WorkbookInput) {
  const { study, run } = input
  const r = run.result
  const { ws, add } = summarySheet(wb, study.title, 34)
  studyFacts(add, study, { run: run.id, periods: periodSpan(input.rows) })
  add('Design', designLabel(run.design))
  add('Standard errors', VCOV_LABELS[r.vcov] ?? r.vcov)
  line(ws, [])
  const words = inferenceText(r)
  const level = Math.round((r.inference?.level ?? 0.95) * 100)
  add('Effect term', labelsOf(input)[r.effect.term] ?? r.effect.term)
  add('Effect estimate', r.effect.estimate, FORMATS.estimate)
  add('Interval and p-value from', words.method)
  add('Why this method', words.reason)
  add(`${level}% interval, low`, r.effect.ciLow ?? 'unbounded', FORMATS.estimate)
  add(`${level}% interval, high`, r.effect.ciHigh ?? 'unbounded', FORMATS.estimate)
  add('p-value', r.effect.p, FORMATS.p)
  if (words.limits) add('Limits of the method', words.limits)
  add('Standard error (analytic)', r.effect.se ?? 'none for this design', FORMATS.estimate)
  if (r.effect.t !== null) add('t (analytic)', r.effect.t, FORMATS.stat)
  if (r.effect.df !== null) add('Degrees of freedom (analytic)', r.effect.df, FORMATS.count)
  add('Observations', r.nObs, FORMATS.count)
  add('Units', r.nUnits, FORMATS.count)
  add('Periods', r.nPeriods, FORMATS.count)
  if (r.nClusters != null) add('Clusters', r.nClusters, FORMATS.count)
  if (r.smallSample) add('Small-sample correction', r.smallSample)
  if (r.durbinWatson != null) add('Durbin-Watson', r.durbinWatson, FORMATS.stat)
  line(ws, [])
  line(ws, ['Cautions', null], (head) => { head.font = { bold: true } })
  for (const c of allCautions(r, study.treated.length)) line(ws, [null, safeText(c)], (row) => { row.getCell(2).alignment = wrapTop })
  ws.commit()
}

/** Term names with the interventions' own labels and dates (level_2 -> "Strengthening (2020-01): change in level"). */
/** Term names in words for a run of the study (both workbooks). */
export function runTermLabels(spec: Record<string, unknown>, study: WorkbookInput['study']): Record<string, string> {
  return termLabels(breaksOfSpec(spec), study.interventions ?? [], 'Start of the policy')
}

function labelsOf(input: WorkbookInput): Record<string, string> {
  return runTermLabels(input.run.spec, input.study)
}

/** The test columns of a coefficient table (both workbooks). */
export const TEST_COLUMNS: Column[] = [
  { header: 't', width: 10, format: FORMATS.stat },
  { header: 'df', width: 8, format: FORMATS.count },
  { header: 'p-value', width: 10, format: FORMATS.p },
  { header: '95% low', width: 14, format: FORMATS.estimate },
  { header: '95% high', width: 14, format: FORMATS.estimate },
]

function coefficients(wb: Book, r: EstimateResult, labels: Record<string, string>) {
  return table(wb, 'Coefficients', [
    { header: 'Term', width: 24 },
    { header: 'Meaning', width: 48 },
    { header: 'Estimate', width: 14, format: FORMATS.estimate },
    { header: 'Standard error', width: 16, format: FORMATS.estimate },
    { header: 'Classical SE', width: 14, format: FORMATS.estimate },
    ...TEST_COLUMNS,
  ], Object.entries(r.coefficients).map(([name, c]) => [name, labels[name] ?? '', c.estimate, c.se, c.seIid, c.t, c.df, c.p, c.ciLow, c.ciHigh]))
}

/** How the headline p-value and interval were computed, and every placebo's effect and ratio. */
function inferenceSheet(wb: Book, r: EstimateResult, labels: Record<string, string>) {
  const inf = r.inference
  const ws = table(wb, 'Inference', [
    { header: 'Item or placebo', width: 40 },
    { header: 'Value or effect', width: 60, format: FORMATS.estimate },
    { header: 'Post/pre RMSPE ratio', width: 20, format: FORMATS.stat },
  ], [])
  if (!inf) {
    line(ws, ['This run predates the inference record: its interval is the analytic one.'])
    return ws
  }
  const rows: [string, CellValue][] = [
    ['Method', METHOD_LABELS[inf.method]],
    ['Why', inf.reason],
    ['Level', inf.level],
    ['p-value', inf.p],
    ['Interval, low', inf.ciLow ?? 'unbounded'],
    ['Interval, high', inf.ciHigh ?? 'unbounded'],
    ['Placebos or draws', inf.draws],
    ['Every set or draw enumerated', inf.enumerated === null ? '' : inf.enumerated ? 'yes' : 'no (drawn at random)'],
    ['Bootstrap weights', inf.weights ?? ''],
    ['Seed', inf.seed ?? 'not used'],
    ['Smallest possible p-value', inf.pMin],
    ['p-value of the RMSPE ratio', inf.pRatio],
    ['Treated unit\'s RMSPE ratio', inf.ratio],
    ['Analytic 95% interval, for reference', inf.analytic ? `${inf.analytic.ciLow} to ${inf.analytic.ciHigh} (p ${inf.analytic.p})` : ''],
  ]
  for (const [k, v] of rows) line(ws, [k, cellValue(v), null])
  for (const [term, t] of Object.entries(inf.terms ?? {})) {
    line(ws, [`${labels[term] ?? term}: p-value`, t.p, null])
    line(ws, [`${labels[term] ?? term}: interval`, t.ciLow === null ? 'unbounded' : `${t.ciLow} to ${t.ciHigh}`, null])
  }
  if (inf.placebos?.length) {
    line(ws, [])
    line(ws, ['Placebo unit', 'Placebo effect', 'Post/pre RMSPE ratio'], (head) => { head.font = { bold: true } })
    for (const p of inf.placebos) line(ws, [safeText(p.unit), p.estimate, p.ratio], (row) => { row.getCell(2).numFmt = FORMATS.estimate })
  }
  return ws
}

/** The weighted comparison: every donor's weight, and the treated and synthetic series. */
function weightedComparison(wb: Book, r: EstimateResult) {
  const ws = table(wb, 'Weighted comparison', [
    { header: 'Donor or period', width: 22 },
    { header: 'Weight or treated', width: 18, format: FORMATS.estimate },
    { header: 'Synthetic', width: 14, format: FORMATS.estimate },
    { header: 'Gap', width: 14, format: FORMATS.estimate },
  ], [])
  const s = r.synthetic
  if (!s) {
    line(ws, ['This run does not use a weighted comparison.'])
    return ws
  }
  for (const [unit, w] of Object.entries(s.weights).sort((a, b) => b[1] - a[1])) line(ws, [safeText(unit), w, null, null])
  line(ws, [])
  line(ws, ['Period', 'Treated', 'Synthetic', 'Gap'], (head) => { head.font = { bold: true } })
  for (const p of s.series) line(ws, [p.period, p.treated, p.synthetic, p.gap])
  line(ws, ['Pre-period RMSPE', s.rmspePre, null, null])
  line(ws, ['Post-period RMSPE', s.rmspePost, null, null])
  line(ws, ['Ratio', s.ratio, null, null])
  return ws
}

/** A bold heading row inside a sheet, for a second or third table below the first. */
function subHeading(ws: Sheet, headers: (string | null)[]): void {
  line(ws, headers, (head) => {
    head.font = { bold: true }
    head.eachCell((cell) => { cell.border = { bottom: { style: 'thin' } } })
  })
}

/** A row whose cells get the given number formats (null: leave the column's). */
function formattedLine(ws: Sheet, values: CellValue[], formats: (string | null)[]): void {
  line(ws, values.map(cellValue), (row) => {
    formats.forEach((f, i) => { if (f) row.getCell(i + 1).numFmt = f })
  })
}

/**
 * Staggered adoption (Callaway and Sant'Anna 2021): every group-time cell ATT(g, t), then the
 * effects by time since adoption with their simultaneous band, by cohort, and overall.
 */
function groupTime(wb: Book, r: EstimateResult) {
  const s = r.staggered
  const ws = table(wb, 'Group-time', [
    { header: 'Cohort (adoption period)', width: 30 },
    { header: 'Period', width: 14 },
    { header: 'Periods since adoption', width: 22, format: FORMATS.count },
    { header: 'Effect ATT(g, t)', width: 18, format: FORMATS.estimate },
    { header: 'Standard error', width: 16, format: FORMATS.estimate },
    { header: 'Cohort units', width: 14, format: FORMATS.count },
    { header: 'Comparison units', width: 18, format: FORMATS.count },
    { header: 'After adoption', width: 16 },
  ], (s?.groupTime ?? []).map(c => [c.cohort, c.period, c.relTime, c.att, c.se, c.nCohort, c.nComparison, c.post ? 'yes' : c.relTime === -1 ? 'no (base period: 0 by construction)' : 'no']))
  if (!s) {
    line(ws, ['This run has no group-time effects: only the staggered-adoption design estimates them.'])
    return ws
  }
  const level = Math.round((r.inference?.level ?? 0.95) * 100)
  line(ws, [])
  subHeading(ws, ['Periods since adoption', 'Estimate', 'Standard error', `${level}% simultaneous band, low`, `${level}% simultaneous band, high`])
  for (const p of [...s.byRelTime].sort((a, b) => a.relTime - b.relTime)) {
    formattedLine(ws, [p.relTime, p.estimate, p.se, p.bandLow, p.bandHigh], [FORMATS.count, FORMATS.estimate, FORMATS.estimate, FORMATS.estimate, FORMATS.estimate])
  }
  line(ws, [])
  subHeading(ws, ['Cohort (adoption period)', 'Estimate (mean of its effects after adoption)', 'Standard error'])
  for (const c of s.byCohort) formattedLine(ws, [c.cohort, c.estimate, c.se], [null, FORMATS.estimate, FORMATS.estimate])
  line(ws, [])
  formattedLine(ws, ['Overall (effects after adoption, weighted by cohort size)', s.overall.estimate, s.overall.se], [null, FORMATS.estimate, FORMATS.estimate])
  line(ws, ['Comparison units', s.comparison === 'not_yet' ? 'never treated or not yet treated' : 'never treated'])
  return ws
}

/**
 * The two-by-two comparisons of a two-way estimate with varying starts (Goodman-Bacon 2021):
 * every row, the weights' sum (1) and the weighted sum (the two-way estimate), and each kind's total.
 */
function decomposition(wb: Book, r: EstimateResult) {
  const rows = r.decomposition ?? []
  const ws = table(wb, 'Decomposition', [
    { header: 'Comparison', width: 56 },
    { header: 'Treated cohort', width: 16 },
    { header: 'Compared with', width: 16 },
    { header: 'Estimate', width: 14, format: FORMATS.estimate },
    { header: 'Weight', width: 12, format: FORMATS.estimate },
  ], rows.map(d => [DECOMPOSITION_LABELS[d.type], d.treated, d.control === 'never' ? 'never treated' : d.control, d.estimate, d.weight]))
  if (!rows.length) {
    line(ws, ['This run has no decomposition: it is made for a two-way difference-in-differences run whose treated units start at different periods.'])
    return ws
  }
  const weightSum = rows.reduce((a, d) => a + d.weight, 0)
  const weightedSum = rows.reduce((a, d) => a + d.weight * d.estimate, 0)
  line(ws, [])
  line(ws, ['Weights sum', null, null, null, weightSum], (row) => { row.font = { bold: true } })
  line(ws, ['Weighted sum (the two-way estimate)', null, null, weightedSum, null], (row) => { row.font = { bold: true } })
  line(ws, [])
  subHeading(ws, ['Kind of comparison: weighted mean and total weight', 'Comparisons', null, 'Estimate', 'Weight'])
  for (const type of ['treated_vs_never', 'earlier_vs_later', 'later_vs_earlier'] as const) {
    const own = rows.filter(d => d.type === type)
    if (!own.length) continue
    const w = own.reduce((a, d) => a + d.weight, 0)
    formattedLine(ws, [DECOMPOSITION_LABELS[type], own.length, null, w > 0 ? own.reduce((a, d) => a + d.weight * d.estimate, 0) / w : null, w], [null, FORMATS.count, null, null, null])
  }
  return ws
}

function eventStudy(wb: Book, r: EstimateResult) {
  const ws = table(wb, 'Event study', [
    { header: 'Periods from start', width: 18, format: FORMATS.count },
    { header: 'Estimate', width: 14, format: FORMATS.estimate },
    { header: 'Standard error', width: 16, format: FORMATS.estimate },
    { header: '95% low', width: 14, format: FORMATS.estimate },
    { header: '95% high', width: 14, format: FORMATS.estimate },
    { header: 'Reference period', width: 16 },
    { header: 'Binned end point', width: 18 },
  ], (r.eventStudy ?? []).map(e => [e.relTime, e.estimate, e.se, e.ciLow, e.ciHigh, e.reference ? 'yes (0 by construction)' : '', e.bin === '<=' ? 'this and earlier' : e.bin === '>=' ? 'this and later' : '']))
  if (!r.eventStudy?.length) line(ws, ['This run is not an event study; no relative-time coefficients.'])
  return ws
}

function preTrend(wb: Book, r: EstimateResult) {
  const rows: CellValue[][] = []
  const w = r.preTrend?.wald
  if (w) {
    rows.push([`Leads jointly zero (F): ${w.terms.join(', ')}`, w.F, w.df1, w.df2, w.p])
    rows.push(['Leads jointly zero (chi-square)', w.chi2, w.df1, null, w.pChi2])
  }
  const lp = r.preTrend?.leadPermutation
  if (lp) rows.push([`Leads by placebo units: share of ${lp.nPlacebos} placebo units (and the treated) with a lead statistic at least as large (smallest possible ${lp.pMin.toFixed(3)})`, null, null, null, lp.p])
  const s = r.preTrend?.slopeDiff
  if (s) rows.push([`Pre-period slope difference, treated minus comparison (estimate ${s.estimate.toPrecision(6)}, SE ${s.se.toPrecision(6)}, ${s.nObs} rows)`, s.estimate / s.se, s.df, null, s.p])
  const ws = table(wb, 'Pre-trend tests', [
    { header: 'Test', width: 70 },
    { header: 'Statistic', width: 12, format: FORMATS.stat },
    { header: 'df 1', width: 8, format: FORMATS.count },
    { header: 'df 2', width: 8, format: FORMATS.count },
    { header: 'p-value', width: 10, format: FORMATS.p },
  ], rows)
  if (!rows.length) line(ws, ['No pre-trend test applies to this design.'])
  return ws
}

export function donorPool(wb: Book, pool: WorkbookPoolRow[]) {
  return table(wb, 'Donor pool', [
    { header: 'Jurisdiction', width: 14 },
    { header: 'Decision', width: 12 },
    { header: 'Reason', width: 40 },
    { header: 'Rank', width: 8, format: FORMATS.count },
    { header: 'RMSPE', width: 12, format: FORMATS.estimate },
    { header: 'RMSPE (demeaned)', width: 16, format: FORMATS.estimate },
    { header: 'Correlation', width: 12, format: FORMATS.stat },
    { header: 'Slope difference', width: 16, format: FORMATS.estimate },
    { header: 'Covariate distance', width: 18, format: FORMATS.estimate },
    { header: 'Missing share', width: 14, format: FORMATS.share },
    { header: 'Flags', width: 50 },
  ], pool.map(p => [
    p.jurisdiction,
    p.included === null ? 'undecided' : p.included ? 'included' : 'excluded',
    p.reason ?? '',
    p.rank, p.rmspe, p.rmspeDemeaned, p.correlation, p.slopeDiff, p.covariateDistance, p.missingShare,
    p.exclusions.map(e => `${e.reason}: ${e.detail}`).join('; '),
  ]))
}

function panelRows(wb: Book, input: WorkbookInput) {
  const columns = input.panelColumns ?? [...new Set(input.rows.flatMap(r => Object.keys(r.values)))].map(key => ({ key, header: key }))
  const treated = new Set(input.study.treated)
  function* cells(): Generator<CellValue[]> {
    for (const r of input.rows) yield [r.unit, String(r.period), treated.has(r.unit) ? 'treated' : 'comparison', ...columns.map(c => r.values[c.key] ?? null)]
  }
  return table(wb, 'Panel rows', [
    { header: 'Jurisdiction', width: 14 },
    { header: 'Period', width: 12 },
    { header: 'Role', width: 12 },
    ...columns.map(c => ({ header: c.header, width: Math.max(12, c.header.length + 2), format: FORMATS.value })),
  ], cells())
}

export function validity(wb: Book, notes: WorkbookValidityNote[]) {
  const byThreat = new Map(notes.map(n => [n.threat, n]))
  return table(wb, 'Validity', [
    { header: 'Threat', width: 24 },
    { header: 'Assessment', width: 18 },
    { header: 'Note', width: 70 },
    { header: 'Evidence', width: 50 },
  ], THREATS.map((t) => {
    const n = byThreat.get(t.key)
    return [t.label, n ? ASSESSMENT_LABELS[n.assessment] : 'not recorded', n?.note ?? '', (n?.evidence ?? []).map(e => `${e.kind} ${e.ref}${e.label ? ` (${e.label})` : ''}`).join('; ')]
  }), { wrap: true })
}

function provenance(wb: Book, input: WorkbookInput) {
  const ws = table(wb, 'Provenance', [
    { header: 'Release', width: 10, format: FORMATS.count },
    { header: 'Source', width: 28 },
    { header: 'Publisher', width: 24 },
    { header: 'Address', width: 30 },
    { header: 'Licence', width: 16 },
    { header: 'Release label', width: 18 },
    { header: 'File', width: 24 },
    { header: 'SHA-256 checksum', width: 68 },
    { header: 'Rows', width: 10, format: FORMATS.count },
    { header: 'Imported', width: 24 },
  ], input.releases.map(r => [r.id, r.source, r.publisher, r.url, r.licence, r.label, r.fileName, r.checksum, r.rowCount, iso(r.importedAt)]))
  line(ws, [])
  const kv = (label: string, value: CellValue) => line(ws, [label, cellValue(value)], (row) => { row.getCell(1).font = { bold: true } })
  kv('Data fingerprint', input.run.fingerprint)
  kv('Run', `#${input.run.id}`)
  kv('Run by', input.run.createdBy ?? 'unknown')
  kv('Run at', iso(input.run.createdAt))
  kv('Software', `${input.software.name} ${input.software.version}`)
  kv('Workbook made by', input.generated.by)
  kv('Workbook made at', input.generated.at.toISOString())
  kv('Spec (JSON)', JSON.stringify(input.run.spec))
  return ws
}

/** Streams a workbook that `fill` writes sheet by sheet, and returns the finished file. */
export async function writeBook(meta: { creator: string, created: Date }, fill: (wb: Book) => void): Promise<Buffer> {
  const stream = new PassThrough()
  const chunks: Buffer[] = []
  stream.on('data', (chunk: Buffer) => chunks.push(chunk))
  const ended = new Promise<void>((resolve, reject) => {
    stream.on('end', resolve)
    stream.on('error', reject)
  })
  const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ stream, useStyles: true, useSharedStrings: false })
  wb.creator = meta.creator
  wb.created = meta.created
  fill(wb)
  await wb.commit()
  await ended
  return Buffer.concat(chunks)
}

export async function buildWorkbook(input: WorkbookInput): Promise<Buffer> {
  return writeBook({ creator: `${input.software.name} ${input.software.version}`, created: input.generated.at }, (wb) => {
    summary(wb, input)
    coefficients(wb, input.run.result, labelsOf(input)).commit()
    inferenceSheet(wb, input.run.result, labelsOf(input)).commit()
    weightedComparison(wb, input.run.result).commit()
    groupTime(wb, input.run.result).commit()
    decomposition(wb, input.run.result).commit()
    eventStudy(wb, input.run.result).commit()
    preTrend(wb, input.run.result).commit()
    donorPool(wb, input.pool).commit()
    panelRows(wb, input).commit()
    robustnessSheet(wb, input.robustness ?? []).commit()
    validity(wb, input.validity).commit()
    threatEvidenceSheet(wb, input.threatEvidence).commit()
    provenance(wb, input).commit()
  })
}

/** A file name for the download: study title, version and run, in safe characters. */
export function workbookFileName(title: string, version: number, runId: number): string {
  const slug = title.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-|-$/g, '').slice(0, 60) || 'study'
  return `${slug}-v${version}-run${runId}-estimates.xlsx`
}
