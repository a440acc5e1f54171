/**
 * Upload of a release: checks everything before anything is written (bad files leave the
 * database as it was), then stores the release (file kept with its SHA-256) and queues
 * its import as a job. Also the preview the upload page shows before the mapping is set.
 * The file is read and checked in the upload thread (runUploadCheck.ts), never on the
 * server's event loop; what it is and a workbook's zip directory are judged first, here.
 */
import { and, eq, inArray } from 'drizzle-orm'
import { sourceReleases } from '~~/db/schema'
import { mappingSchema, type Mapping, type UploadProblem } from '#shared/schemas/uploads'
import { parsePeriod } from '#shared/utils/periods'
import type { Upload } from '../../utils/upload'
import { findSource } from '../registry/sources'
import { checksumOf } from './checksum'
import { loadRegistry } from './importRelease'
import type { CheckRequest, TableSummary } from './checkUpload'
import { checkZipDirectory, sniff } from './preflight'
import type { Cell } from './readTable'
import { runUploadCheck } from './runUploadCheck'
import { UploadError } from './uploadError'
import { problemMessage, type Validation } from './validate'

export const IMPORT_JOB = 'import-release'

function refuse(statusCode: number, message: string, errors: UploadProblem[], problemCount = errors.length): never {
  throw createError({ statusCode, message, data: { message, errors, problemCount, issues: [] } })
}

function parseMapping(text: string | undefined): Mapping {
  if (!text) refuse(400, 'Send the column mapping as JSON in the "mapping" field.', [{ row: null, column: null, problem: 'No mapping.' }])
  let raw: unknown
  try {
    raw = JSON.parse(text)
  }
  catch {
    refuse(400, 'The mapping is not valid JSON.', [{ row: null, column: null, problem: 'The mapping is not valid JSON.' }])
  }
  const result = mappingSchema.safeParse(raw)
  if (!result.success) {
    const issues = result.error.issues.map(i => ({ path: i.path.join('.'), message: i.message, code: i.code }))
    throw createError({ statusCode: 400, message: `Invalid mapping: ${issues[0]?.path ? `${issues[0].path}: ` : ''}${issues[0]?.message}`, data: { issues, errors: [] } })
  }
  return result.data
}

/** Refuses at once what needs no parsing: an empty file, a non-table, a zip bomb by its directory. */
function quickChecks(upload: Upload): void {
  try {
    if (sniff(upload.file, upload.fileName) === 'xlsx') checkZipDirectory(upload.file)
  }
  catch (e) {
    if (e instanceof UploadError) refuse(e.statusCode, e.message, e.problems)
    throw e
  }
}

/** Reads (and with a mapping, validates) the file in the upload thread; refuses an unreadable file. */
async function checked(upload: Upload, options: { delimiter?: string, sheet?: string }, mapping: Mapping | null, sampleRows = 0): Promise<{ table: TableSummary, validation: Validation | null }> {
  quickChecks(upload)
  const request: CheckRequest = {
    file: upload.file,
    fileName: upload.fileName,
    options: { delimiter: options.delimiter, sheet: options.sheet },
    mapping,
    registry: mapping ? await loadRegistry(usePool()) : null,
    sampleRows,
  }
  const result = await runUploadCheck(request)
  if (!result.ok) refuse(result.statusCode, result.message, result.problems)
  return result
}

async function sameFile(sourceId: number, checksum: string) {
  const [row] = await useDb().select({ id: sourceReleases.id, label: sourceReleases.label, status: sourceReleases.status, createdAt: sourceReleases.createdAt })
    .from(sourceReleases)
    .where(and(eq(sourceReleases.sourceId, sourceId), eq(sourceReleases.checksum, checksum), inArray(sourceReleases.status, ['done', 'importing'])))
  return row ?? null
}

function report(v: Validation) {
  return { ok: v.ok, problems: v.problems, problemCount: v.problemCount, warnings: v.warnings, summary: v.summary, newMeasures: v.newMeasures }
}

/** Stores and queues a release; 400 with every problem, 409 for a file already imported. */
export async function submitRelease(userId: number, sourceId: number, upload: Upload) {
  const source = await findSource(useDb(), sourceId)
  const mapping = parseMapping(upload.fields.mapping)
  quickChecks(upload)
  const checksum = checksumOf(upload.file)
  const previous = await sameFile(source.id, checksum)
  if (previous) {
    refuse(409, `This file is identical to release #${previous.id}${previous.label ? ` ("${previous.label}")` : ''} of ${source.name}, uploaded ${previous.createdAt.toISOString().slice(0, 10)}${previous.status === 'importing' ? ' and still importing' : ''}; nothing was imported.`, [])
  }
  const { validation } = await checked(upload, mapping, mapping)
  const checkedFile = validation!
  if (!checkedFile.ok) refuse(400, problemMessage(checkedFile), checkedFile.problems, checkedFile.problemCount)

  const label = upload.fields.label?.trim() || mapping.label || null
  const { releaseId, jobId } = await useDb().transaction(async (tx) => {
    const [release] = await tx.insert(sourceReleases).values({
      sourceId: source.id,
      label,
      fileName: upload.fileName,
      checksum,
      file: upload.file,
      sizeBytes: upload.file.length,
      mapping: mapping as unknown as Record<string, unknown>,
      status: 'importing',
      createdBy: userId,
    }).returning({ id: sourceReleases.id })
    const jobId = await createJob(tx, IMPORT_JOB, userId, { releaseId: release!.id })
    await audit(tx, {
      userId,
      action: 'upload',
      entity: 'source_release',
      entityId: release!.id,
      after: { sourceId: source.id, label, fileName: upload.fileName, checksum, sizeBytes: upload.file.length, mapping, jobId },
    })
    return { releaseId: release!.id, jobId }
  })
  await dispatchJob(jobId, IMPORT_JOB, { releaseId })
  return { jobId, releaseId, checksum, summary: checkedFile.summary, warnings: checkedFile.warnings }
}

const shown = (c: Cell): string | number | null => (c instanceof Date ? c.toISOString().slice(0, 10) : c)

function looksLikePeriod(c: Cell): boolean {
  if (c instanceof Date) return true
  try {
    const p = parsePeriod(c == null ? '' : c)
    return p.frequency !== 'integer'
  }
  catch {
    return false
  }
}

/** A first guess at the mapping from the column names (the page lets the person correct it). */
function suggestMapping(table: Pick<TableSummary, 'columns' | 'headerCells'>): Record<string, unknown> {
  const cols = table.columns
  const find = (re: RegExp) => cols.find(c => re.test(c))
  const jurisdiction = find(/^(jurisdiction|code|unit|municipality|region_code|geo|area)/i) ?? cols[0]
  const periodCols = table.headerCells.filter(looksLikePeriod).length
  if (periodCols >= 2) return { layout: 'wide', jurisdiction }
  const period = find(/^(period|date|month|year|quarter|week|time)/i)
  const measure = find(/^(measure|indicator|variable|series)$/i)
  const value = find(/^(value|obs|observation|amount)$/i)
  if (measure && value) return { layout: 'long', jurisdiction, period, measure, value }
  const values = Object.fromEntries(cols.filter(c => c !== jurisdiction && c !== period).map(c => [c, '']))
  return { layout: 'long', jurisdiction, period, values }
}

/** The first rows and the columns of a file; with a mapping, the full check too. Writes nothing. */
export async function previewRelease(sourceId: number, upload: Upload) {
  const source = await findSource(useDb(), sourceId)
  const mapping = upload.fields.mapping ? parseMapping(upload.fields.mapping) : null
  const options = mapping ?? { delimiter: upload.fields.delimiter, sheet: upload.fields.sheet }
  const { table, validation } = await checked(upload, options, mapping, 20)
  const previous = await sameFile(source.id, checksumOf(upload.file))
  return {
    fileName: upload.fileName,
    format: table.format,
    delimiter: table.delimiter,
    sheet: table.sheet,
    columns: table.columns,
    rows: table.sample.map(r => r.map(shown)),
    rowCount: table.rowCount,
    notes: table.notes,
    suggestion: suggestMapping(table),
    duplicateOf: previous ? { id: previous.id, label: previous.label, createdAt: previous.createdAt } : null,
    validation: validation ? report(validation) : null,
  }
}
