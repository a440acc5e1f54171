/**
 * Reads an uploaded file into a header and rows of cells: CSV (papaparse) or XLSX (exceljs).
 * Pure (no database, no Nitro; relative imports so tsx runs it too), so the routes, the import job, the seed and the tests share it.
 *
 * Row numbers follow what a person sees in a spreadsheet: the header is row 1, the first
 * data row is row 2. Completely empty lines are skipped but keep their numbers.
 * Throws UploadError (with problems naming row and column) when the file cannot be read.
 * The limits of limits.ts are checked before anything is parsed (preflight.ts).
 */
import ExcelJS from 'exceljs'
import Papa from 'papaparse'
import { clip, countText, MAX_CELL_CHARS, MAX_COLUMNS, MAX_PROBLEMS, MAX_ROWS } from './limits'
import { checkZipDirectory, decodeText, scanCsv, sniff, verifyZipParts } from './preflight'
import type { UploadProblem } from '../../../shared/schemas/uploads'
import { UploadError } from './uploadError'

export { UploadError }

export type Cell = string | number | Date | null

export interface Table {
  format: 'csv' | 'xlsx'
  /** The delimiter used (CSV only). */
  delimiter: string | null
  sheet: string | null
  columns: string[]
  /** The header as read (XLSX headers may be dates or numbers). */
  headerCells: Cell[]
  rows: Cell[][]
  /** rowNumbers[i] is the spreadsheet row number of rows[i]. */
  rowNumbers: number[]
  /** Things the reader did that a person should know (an encoding guessed); shown as warnings. */
  notes: string[]
}

/** Whether the file is read as a workbook (by its content: a zip archive). */
export function isXlsx(file: Buffer, fileName = ''): boolean {
  return sniff(file, fileName) === 'xlsx'
}

export async function readTable(file: Buffer, fileName: string, options: { delimiter?: string, sheet?: string } = {}): Promise<Table> {
  return sniff(file, fileName) === 'xlsx' ? readXlsx(file, options.sheet) : readCsv(file, options.delimiter)
}

function readCsv(file: Buffer, delimiter = 'auto'): Table {
  const { text, notes } = decodeText(file)
  scanCsv(text, delimiter)
  if (text.trim() === '') throw new UploadError('The file holds no data: only blank lines or spaces.', [{ row: null, column: null, problem: 'The file holds no data.' }])
  const parsed = Papa.parse<string[]>(text, {
    delimiter: delimiter === 'auto' ? '' : delimiter,
    delimitersToGuess: [',', ';', '\t', '|'],
    skipEmptyLines: false,
  })
  const problems: UploadProblem[] = []
  for (const err of parsed.errors) {
    // Field-count problems are reported per row by the validator, with the column count.
    if (err.code === 'TooFewFields' || err.code === 'TooManyFields' || err.code === 'UndetectableDelimiter') continue
    if (problems.length < MAX_PROBLEMS) problems.push({ row: err.row == null ? null : err.row + 1, column: null, problem: err.message })
  }
  if (problems.length) throw new UploadError(`The file is not valid CSV: ${problems[0]!.problem} (row ${problems[0]!.row ?? '?'}).`, problems)
  const data = parsed.data
  let headerAt = 0
  while (headerAt < data.length && isBlankRow(data[headerAt]!)) headerAt++
  if (headerAt >= data.length) throw new UploadError('The file holds no data.', [{ row: null, column: null, problem: 'The file holds no data.' }])
  const columns = data[headerAt]!.map(c => c.trim())
  const rows: Cell[][] = []
  const rowNumbers: number[] = []
  for (let i = headerAt + 1; i < data.length; i++) {
    const r = data[i]!
    if (isBlankRow(r)) continue
    rows.push(r)
    rowNumbers.push(i + 1)
  }
  return { format: 'csv', delimiter: parsed.meta.delimiter, sheet: null, columns, headerCells: columns, rows, rowNumbers, notes }
}

function isBlankRow(r: readonly Cell[]): boolean {
  return r.length === 0 || (r.length === 1 && (r[0] == null || String(r[0]).trim() === ''))
}

function xlsxCell(v: ExcelJS.CellValue): Cell {
  if (v == null) return null
  if (typeof v === 'number' || typeof v === 'string') return v
  if (typeof v === 'boolean') return String(v)
  if (v instanceof Date) return v
  if (typeof v === 'object') {
    if ('result' in v) return xlsxCell((v as ExcelJS.CellFormulaValue).result as ExcelJS.CellValue)
    if ('richText' in v) return (v as ExcelJS.CellRichTextValue).richText.map(t => t.text).join('')
    if ('text' in v) return String((v as ExcelJS.CellHyperlinkValue).text)
    if ('error' in v) return String((v as ExcelJS.CellErrorValue).error)
  }
  return String(v)
}

function tooBig(message: string, problem: string, statusCode = 413): never {
  throw new UploadError(message, [{ row: null, column: null, problem }], statusCode)
}

async function readXlsx(file: Buffer, sheetName?: string): Promise<Table> {
  verifyZipParts(file, checkZipDirectory(file))
  const workbook = new ExcelJS.Workbook()
  try {
    await workbook.xlsx.load(file as unknown as ArrayBuffer)
  }
  catch (e) {
    throw new UploadError(`The file could not be read as an XLSX workbook: ${clip((e as Error).message, 120)}`, [{ row: null, column: null, problem: 'Not a readable XLSX workbook.' }])
  }
  const sheet = sheetName ? workbook.getWorksheet(sheetName) : workbook.worksheets[0]
  if (!sheet) {
    const names = workbook.worksheets.slice(0, 20).map(w => `"${clip(w.name)}"`).join(', ')
    throw new UploadError(sheetName ? `The workbook has no sheet "${clip(sheetName)}"; it has: ${names || 'none'}.` : 'The workbook has no sheets.', [{ row: null, column: null, problem: 'No such sheet.' }])
  }
  if (sheet.rowCount > MAX_ROWS + 1) tooBig(`The sheet "${clip(sheet.name)}" has ${countText(sheet.rowCount)} rows; at most ${countText(MAX_ROWS)} are read. Split it and upload the parts one after another.`, `Over ${countText(MAX_ROWS)} rows.`)
  if (sheet.columnCount > MAX_COLUMNS) tooBig(`The sheet "${clip(sheet.name)}" has ${countText(sheet.columnCount)} columns; at most ${countText(MAX_COLUMNS)} are read.`, `Over ${countText(MAX_COLUMNS)} columns.`)
  let columns: string[] | null = null
  let headerCells: Cell[] = []
  const rows: Cell[][] = []
  const rowNumbers: number[] = []
  sheet.eachRow({ includeEmpty: false }, (row, rowNumber) => {
    const values = row.values as ExcelJS.CellValue[]
    const cells: Cell[] = []
    for (let c = 1; c < values.length; c++) {
      const cell = xlsxCell(values[c])
      if (typeof cell === 'string' && cell.length > MAX_CELL_CHARS) {
        tooBig(`A cell in row ${countText(rowNumber)} is longer than ${countText(MAX_CELL_CHARS)} characters (it starts "${clip(cell)}"); a cell holds a code, a period or a number.`, `Row ${countText(rowNumber)}: a cell over ${countText(MAX_CELL_CHARS)} characters.`, 400)
      }
      cells.push(cell)
    }
    if (isBlankRow(cells) || cells.every(c => c == null || String(c).trim() === '')) return
    if (!columns) {
      headerCells = cells
      columns = cells.map(c => (c instanceof Date ? c.toISOString().slice(0, 10) : c == null ? '' : String(c).trim()))
      return
    }
    rows.push(cells)
    rowNumbers.push(rowNumber)
  })
  if (!columns) throw new UploadError(`The sheet "${clip(sheet.name)}" is empty.`, [{ row: null, column: null, problem: 'The sheet holds no data.' }])
  const notes = workbook.worksheets.length > 1 && !sheetName
    ? [`The workbook has ${workbook.worksheets.length} sheets; the first, "${clip(sheet.name)}", was read (choose another sheet in the mapping).`]
    : []
  return { format: 'xlsx', delimiter: null, sheet: sheet.name, columns: columns as string[], headerCells, rows, rowNumbers, notes }
}

/** The delimiter a one-column header probably uses, to name it in the error. */
export function likelyDelimiter(header: string): string | null {
  const counts: [string, number][] = [';', '\t', '|', ',', ':', ' '].map(d => [d, header.split(d).length - 1])
  counts.sort((a, b) => b[1] - a[1])
  return counts[0]![1] > 0 ? counts[0]![0] : null
}

export function delimiterName(d: string): string {
  return d === '\t' ? 'tab' : d === ' ' ? 'space' : `"${d}"`
}
