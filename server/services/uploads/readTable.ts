/**
 * Reads an uploaded file into a header and rows of cells: CSV (papaparse) or XLSX (exceljs).
 * openTable() hands the rows over one at a time (the check of a million-row CSV keeps no
 * million arrays: retaining them cost more in garbage collection than the parse itself);
 * readTable() collects them, for the tests and small files.
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

/** What is known of a table before its rows are read. */
export interface TableHead {
  format: 'csv' | 'xlsx'
  /** The delimiter used (CSV only). */
  delimiter: string | null
  sheet: string | null
  columns: string[]
  /** The header as read (XLSX headers may be dates or numbers). */
  headerCells: Cell[]
  /** Things the reader did that a person should know (an encoding guessed); shown as warnings. */
  notes: string[]
}

/** Visits one data row: its cells and its spreadsheet row number. */
export type RowVisitor = (cells: Cell[], row: number) => void

/** A table whose rows are read on demand, in order, without being kept. */
export interface TableStream extends TableHead {
  /**
   * Calls `visit` for every data row in file order (blank lines skipped) and returns how many
   * there were. A CSV that is not valid throws UploadError after the pass, whatever the
   * visitor did. Each call reads the rows again.
   */
  eachRow(visit: RowVisitor): number
}

export interface Table extends TableHead {
  rows: Cell[][]
  /** rowNumbers[i] is the spreadsheet row number of rows[i]. */
  rowNumbers: number[]
}

/** Whether the file is read as a workbook (by its content: a zip archive). */
export function isXlsx(file: Buffer, fileName = ''): boolean {
  return sniff(file, fileName) === 'xlsx'
}

export async function openTable(file: Buffer, fileName: string, options: { delimiter?: string, sheet?: string } = {}): Promise<TableStream> {
  return sniff(file, fileName) === 'xlsx' ? streamOf(await readXlsx(file, options.sheet)) : openCsv(file, options.delimiter)
}

export async function readTable(file: Buffer, fileName: string, options: { delimiter?: string, sheet?: string } = {}): Promise<Table> {
  const { eachRow, ...head } = await openTable(file, fileName, options)
  const rows: Cell[][] = []
  const rowNumbers: number[] = []
  eachRow((cells, row) => {
    rows.push(cells)
    rowNumbers.push(row)
  })
  return { ...head, rows, rowNumbers }
}

/** A table already in memory, read as a stream. */
export function streamOf(table: Table): TableStream {
  const { rows, rowNumbers, ...head } = table
  return {
    ...head,
    eachRow(visit) {
      for (let i = 0; i < rows.length; i++) visit(rows[i]!, rowNumbers[i]!)
      return rows.length
    },
  }
}

const noData = () => new UploadError('The file holds no data.', [{ row: null, column: null, problem: 'The file holds no data.' }])

/**
 * papaparse looks at the first MiB of a text for its line breaks and at its first ten rows for
 * the delimiter; the header is read from that much (with room for blank lines before it), so
 * a long file is not split in full just to find its first row.
 */
const HEAD_CHARS = 1024 * 1024

interface CsvHead { header: string[] | null, headerAt: number, delimiter: string, newline: string }

function csvHead(text: string, delimiter: string): CsvHead {
  const config = { delimiter: delimiter === 'auto' ? '' : delimiter, delimitersToGuess: [',', ';', '\t', '|'], skipEmptyLines: false as const }
  const read = (part: string): CsvHead & { records: number } => {
    const { data, meta } = Papa.parse<string[]>(part, config)
    const headerAt = data.findIndex(r => !isBlankRow(r))
    return { header: headerAt < 0 ? null : data[headerAt]!, headerAt, delimiter: meta.delimiter, newline: meta.linebreak, records: data.length }
  }
  if (text.length > HEAD_CHARS) {
    // the ten rows after the header, and one more that may be cut off, lie within the part read
    const head = read(text.slice(0, HEAD_CHARS))
    if (head.header && head.records >= head.headerAt + 12) return head
  }
  return read(text)
}

function openCsv(file: Buffer, delimiter = 'auto'): TableStream {
  const { text, notes } = decodeText(file)
  scanCsv(text, delimiter)
  if (text.trim() === '') throw new UploadError('The file holds no data: only blank lines or spaces.', [{ row: null, column: null, problem: 'The file holds no data.' }])
  const head = csvHead(text, delimiter)
  if (head.header === null) {
    // Nothing but blank rows: a pass over them names any CSV problem first.
    csvRows(text, head, () => {})
    throw noData()
  }
  const columns = head.header.map(c => c.trim())
  return {
    format: 'csv',
    delimiter: head.delimiter,
    sheet: null,
    columns,
    headerCells: columns,
    notes,
    eachRow: visit => csvRows(text, head, visit),
  }
}

/** One pass over the CSV text, visiting the rows after the header; throws the CSV's problems after it. */
function csvRows(text: string, head: CsvHead, visit: RowVisitor): number {
  const { headerAt, delimiter, newline } = head
  let record = -1
  let count = 0
  const take = (cells: string[]) => {
    record++
    if (record <= headerAt || isBlankRow(cells)) return
    count++
    visit(cells, record + 1)
  }
  if (text.indexOf('"') < 0) {
    // No quotes: what papaparse does then (its "fast mode": split at line breaks, then at
    // the delimiter), a line at a time instead of an array of every line.
    for (let at = 0; at <= text.length;) {
      let end = text.indexOf(newline, at)
      if (end < 0) end = text.length
      take(text.slice(at, end).split(delimiter))
      at = end + newline.length
    }
    return count
  }
  const problems: UploadProblem[] = []
  Papa.parse<string[]>(text, {
    delimiter,
    newline: newline as '\n',
    skipEmptyLines: false,
    step: (result) => {
      for (const err of result.errors) {
        // Field-count problems are reported per row by the validator, with the column count.
        if (err.code === 'TooFewFields' || err.code === 'TooManyFields' || err.code === 'UndetectableDelimiter') continue
        if (problems.length < MAX_PROBLEMS) problems.push({ row: record + 2, column: null, problem: err.message })
      }
      take(result.data)
    },
  })
  if (problems.length) throw new UploadError(`The file is not valid CSV: ${problems[0]!.problem} (row ${problems[0]!.row ?? '?'}).`, problems)
  return count
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
