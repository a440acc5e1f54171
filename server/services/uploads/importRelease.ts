/**
 * The bulk path: imports one source release (its stored file and mapping) in a single
 * transaction, all or nothing. Used by the upload job, the demo seed and the benchmark,
 * so it takes a pg.Pool and no Nitro helpers.
 *
 * Rows go in through COPY and set operations (copyObservations.ts), sorted by the panel's
 * key; the rows they refer to are locked once, not per row, and imports of the same measure
 * take turns (an advisory lock per measure, held to commit). Any failure (bad data found on re-check, a lost
 * connection, a killed process) rolls the transaction back: the release is marked
 * failed with its problems and holds no observations.
 */
import type pg from 'pg'
import { mappingSchema, type UploadProblem } from '../../../shared/schemas/uploads'
import { MAX_PROBLEMS } from './limits'
import { runUploadCheck } from './runUploadCheck'
import { UploadError } from './uploadError'
import { problemMessage, type MeasureInfo, type Observations, type Registry } from './validate'
import { copyObservations } from './copyObservations'

export type Queryable = Pick<pg.PoolClient, 'query'>

/** First key of the advisory lock an import takes per measure (the second is the measure id). */
export const MEASURE_IMPORT_LOCK = 7_431_001
export type Progress = (fraction: number, message: string) => Promise<void> | void

export async function loadRegistry(db: Queryable): Promise<Registry> {
  const j = await db.query<{ id: number, code: string }>('SELECT id, code FROM jurisdictions')
  const m = await db.query<MeasureInfo>('SELECT id, key, label, unit, frequency FROM measures')
  return {
    jurisdictions: new Map(j.rows.map(r => [r.code, r.id])),
    measures: new Map(m.rows.map(r => [r.key, r])),
  }
}

export interface ImportResult {
  releaseId: number
  rowCount: number
  measures: Record<string, number>
  createdMeasures: string[]
  warnings: string[]
}

export class ImportFailure extends Error {
  constructor(message: string, public readonly problems: UploadProblem[]) {
    super(message)
    this.name = 'ImportFailure'
  }
}

/**
 * observations has no per-row foreign keys (db/schema.ts): lock every row referred to once,
 * as the key checks would, so none can be deleted until this import commits or rolls back.
 * A vanished jurisdiction or measure fails the import.
 */
async function lockReferences(client: Queryable, releaseId: number, measureIds: number[], obs: Observations): Promise<void> {
  const jurisdictionIds = [...new Set(obs.jurisdictionIds.subarray(0, obs.length))]
  const release = await client.query('SELECT id FROM source_releases WHERE id = $1 FOR KEY SHARE', [releaseId])
  const measures = await client.query('SELECT id FROM measures WHERE id = ANY($1::int[]) FOR KEY SHARE', [measureIds])
  const places = await client.query('SELECT id FROM jurisdictions WHERE id = ANY($1::int[]) FOR KEY SHARE', [jurisdictionIds])
  if (release.rowCount !== 1 || measures.rowCount !== new Set(measureIds).size || places.rowCount !== jurisdictionIds.length) {
    throw new ImportFailure('A jurisdiction or measure this file refers to was deleted while it was being imported; nothing was imported. Upload it again.', [])
  }
}

interface ReleaseRow {
  id: number
  source_id: number
  file_name: string
  file: Buffer
  mapping: unknown
  status: string
  created_by: number | null
}

/**
 * Imports release `releaseId` (status "importing"). Resolves with what went in, or marks
 * the release failed and rejects with ImportFailure (problems) or the underlying error.
 */
export async function importRelease(pool: pg.Pool, releaseId: number, onProgress: Progress = () => {}): Promise<ImportResult> {
  const { rows: [release] } = await pool.query<ReleaseRow>(
    'SELECT id, source_id, file_name, file, mapping, status, created_by FROM source_releases WHERE id = $1', [releaseId])
  if (!release) throw new ImportFailure(`No release with id ${releaseId}.`, [])
  if (release.status !== 'importing') throw new ImportFailure(`Release ${releaseId} is ${release.status}, not waiting to be imported.`, [])

  const client = await pool.connect()
  let began = false
  try {
    await onProgress(0.02, 'Reading and checking the file')
    const mapping = mappingSchema.parse(release.mapping)
    // Read and checked in the upload thread (off the event loop) against the registry as it is
    // now; lockReferences() below makes sure everything the rows refer to still exists.
    const registry = await loadRegistry(pool)
    const read = await runUploadCheck({ file: release.file, fileName: release.file_name, options: mapping, mapping, registry, sampleRows: 0, keepObservations: true })
    if (!read.ok) throw new UploadError(read.message, read.problems, read.statusCode)
    const checked = read.validation!
    if (!checked.ok) throw new ImportFailure(problemMessage(checked), checked.problems)
    await onProgress(0.1, `Checked ${read.table.rowCount.toLocaleString('en')} rows`)

    await client.query('BEGIN')
    began = true
    await onProgress(0.2, `Importing ${checked.observations.length.toLocaleString('en')} values`)

    const createdMeasures: string[] = []
    for (const m of checked.newMeasures) {
      const { rows: [row] } = await client.query<MeasureInfo>(
        `INSERT INTO measures (key, label, unit, kind, frequency) VALUES ($1, $2, $3, $4, $5)
         RETURNING id, key, label, unit, frequency`, [m.key, m.label, m.unit, m.kind, m.frequency])
      registry.measures.set(m.key, row!)
      createdMeasures.push(m.key)
      await client.query(
        `INSERT INTO audit_log (user_id, action, entity, entity_id, after) VALUES ($1, 'create', 'measure', $2, $3)`,
        [release.created_by, row!.id, JSON.stringify({ ...row, derivedFrom: `release ${releaseId}` })])
    }
    const measureIds = checked.observations.measureKeys.map(k => registry.measures.get(k)!.id)
    // one import at a time per measure (in id order, so two imports never wait on each other
    // crosswise): panel_cells is brought up to date with set operations that assume it
    const distinctMeasures = [...new Set(measureIds)].sort((a, b) => a - b)
    for (const id of distinctMeasures) await client.query('SELECT pg_advisory_xact_lock($1, $2)', [MEASURE_IMPORT_LOCK, id])
    await lockReferences(client, releaseId, measureIds, checked.observations)
    const total = checked.observations.length
    await copyObservations(client, releaseId, checked.observations, measureIds, done =>
      onProgress(0.2 + 0.75 * (done / total), `Imported ${done.toLocaleString('en')} of ${total.toLocaleString('en')} values`))

    await client.query(
      `UPDATE source_releases SET status = 'done', row_count = $2, imported_at = now(), errors = $3, measure_ids = $4 WHERE id = $1`,
      [releaseId, total, checked.warnings.length ? JSON.stringify(checked.warnings.map(w => ({ row: null, column: null, problem: w, warning: true }))) : null,
        distinctMeasures])
    const result: ImportResult = { releaseId, rowCount: total, measures: checked.summary.measures, createdMeasures, warnings: checked.warnings }
    await client.query(
      `INSERT INTO audit_log (user_id, action, entity, entity_id, after) VALUES ($1, 'import', 'source_release', $2, $3)`,
      [release.created_by, releaseId, JSON.stringify({ sourceId: release.source_id, ...result })])
    // the last point where a cancel can still undo the import: after COMMIT the data is in, so a
    // cancel that arrives later is not honoured (the job ends done and says so)
    await onProgress(0.97, 'Finishing the import')
    await client.query('COMMIT')
    began = false
    await Promise.resolve(onProgress(1, `Imported ${total.toLocaleString('en')} values`)).catch(() => {})
    return result
  }
  catch (e) {
    if (began) await client.query('ROLLBACK').catch(() => {})
    const problems = e instanceof ImportFailure || e instanceof UploadError ? e.problems : [{ row: null, column: null, problem: (e as Error).message }]
    await markReleaseFailed(pool, releaseId, problems)
    throw e
  }
  finally {
    client.release()
  }
}

export async function markReleaseFailed(db: Queryable, releaseId: number, problems: UploadProblem[]): Promise<void> {
  await db.query(
    `UPDATE source_releases SET status = 'failed', errors = $2 WHERE id = $1 AND status = 'importing'`,
    [releaseId, JSON.stringify(problems.slice(0, MAX_PROBLEMS))])
}
