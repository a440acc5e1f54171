/**
 * The whole check of an uploaded file in one call: read it (limits first), and with a mapping
 * and the registry, validate every row. Returns what the routes reply with (the columns, the
 * first rows, the validation without its observations) or the refusal. Pure, so it runs the
 * same in the upload thread (uploadThread.ts) and in-process (tests, the CLI).
 */
import type { Mapping, UploadProblem } from '../../../shared/schemas/uploads'
import { clip } from './limits'
import { openTable, type Cell, type TableStream } from './readTable'
import { UploadError } from './uploadError'
import { validateRows, type Registry, type Validation } from './validate'
import { emptyObservations } from './validate/types'

const SAMPLE_CHARS = 200

export interface CheckRequest {
  file: Uint8Array
  fileName: string
  options: { delimiter?: string, sheet?: string }
  /** With a mapping (and the registry), every row is checked too. */
  mapping: Mapping | null
  registry: Registry | null
  /** Rows of the table to send back (the preview shows 20). */
  sampleRows: number
  /** Send the observations back too (the import job inserts them); the routes need only the verdict. */
  keepObservations?: boolean
}

export interface TableSummary {
  format: 'csv' | 'xlsx'
  delimiter: string | null
  sheet: string | null
  columns: string[]
  headerCells: Cell[]
  sample: Cell[][]
  rowCount: number
  notes: string[]
}

export type CheckResult =
  | { ok: true, table: TableSummary, validation: Validation | null }
  | { ok: false, statusCode: number, message: string, problems: UploadProblem[] }

export async function checkUpload(req: CheckRequest): Promise<CheckResult> {
  try {
    const file = Buffer.isBuffer(req.file) ? req.file : Buffer.from(req.file.buffer, req.file.byteOffset, req.file.byteLength)
    const opened = await openTable(file, req.fileName, req.options)
    // one pass over the rows: the first few are kept for the preview as they go by
    const sample: Cell[][] = []
    let rowCount = 0
    const table: TableStream = {
      ...opened,
      eachRow: visit => (sample.length = 0, rowCount = opened.eachRow((cells, row) => {
        if (sample.length < req.sampleRows) sample.push(cells)
        visit(cells, row)
      })),
    }
    const validation = req.mapping && req.registry ? validateRows(table, req.mapping, req.registry) : null
    if (!validation) table.eachRow(() => {})
    return {
      ok: true,
      table: {
        format: table.format,
        delimiter: table.delimiter,
        sheet: table.sheet,
        columns: table.columns,
        headerCells: table.headerCells,
        // A preview shows cells, not whole files: long texts are cut (limits.ts allows 1,000 characters a cell).
        sample: sample.map(r => r.map(c => (typeof c === 'string' && c.length > SAMPLE_CHARS ? clip(c, SAMPLE_CHARS) : c))),
        rowCount,
        notes: table.notes,
      },
      validation: validation && (req.keepObservations ? validation : { ...validation, observations: emptyObservations() }),
    }
  }
  catch (e) {
    if (e instanceof UploadError) return { ok: false, statusCode: e.statusCode, message: e.message, problems: e.problems }
    throw e
  }
}
