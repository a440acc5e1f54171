/**
 * The bulk path: imports one source release (its stored file and mapping) in a single
 * transaction, all or nothing. Used by the upload job, the demo seed and the benchmark,
 * so it takes a pg.Pool and no Nitro helpers.
 *
 * Rows go in as large multi-row batches (INSERT ... SELECT FROM unnest of arrays), sorted
 * by the panel-read index order; the rows they refer to are locked once, not per row. Any failure (bad data found on re-check, a lost
 * connection, a killed process) rolls the transaction back: the release is marked
 * failed with its problems and holds no observations.
 */
import type pg from 'pg'
import { mappingSchema, type UploadProblem } from '../../../shared/schemas/uploads'
import { copyObservations } from './copyObservations'
import { readTable, UploadError } from './readTable'
import { problemMessage, validateTable, type MeasureInfo, type Observations, type Registry } from './validate'

export type Queryable = Pick<pg.PoolClient, 'query'>
export type Progress = (fraction: number, message: string) => Promise<void> | void

export const BATCH_ROWS = 50_000

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

/** Order of the panel index (measure, jurisdiction, period): index pages fill in sequence. */
function sortedOrder(obs: Observations, measureIds: number[]): Uint32Array {
  const order = new Uint32Array(obs.length)
  for (let i = 0; i < obs.length; i++) order[i] = i
  const m = obs.measureIndex
  const j = obs.jurisdictionIds
  const p = obs.periods
  order.sort((a, b) => (measureIds[m[a]!]! - measureIds[m[b]!]!) || (j[a]! - j[b]!) || (p[a]! < p[b]! ? -1 : p[a]! > p[b]! ? 1 : 0))
  return order
}

/**
 * Inserts observations for one release inside the caller's transaction.
 * Periods are canonical texts (digits, "-", "Q", "W"), so the array literal needs no quoting.
 */
export async function insertObservations(client: Queryable, releaseId: number, obs: Observations, measureIds: number[], onBatch?: (done: number) => Promise<void> | void): Promise<void> {
  const order = sortedOrder(obs, measureIds)
  for (let start = 0; start < obs.length; start += BATCH_ROWS) {
    const end = Math.min(obs.length, start + BATCH_ROWS)
    const ms: number[] = new Array(end - start)
    const js: number[] = new Array(end - start)
    const ps: string[] = new Array(end - start)
    const vs: string[] = new Array(end - start)
    for (let k = start; k < end; k++) {
      const i = order[k]!
      ms[k - start] = measureIds[obs.measureIndex[i]!]!
      js[k - start] = obs.jurisdictionIds[i]!
      ps[k - start] = obs.periods[i]!
      vs[k - start] = String(obs.values[i]!)
    }
    await client.query(
      `INSERT INTO observations (release_id, measure_id, jurisdiction_id, period, value)
       SELECT $1, m, j, p, v FROM unnest($2::int[], $3::int[], $4::text[], $5::float8[]) AS t(m, j, p, v)`,
      [releaseId, `{${ms.join(',')}}`, `{${js.join(',')}}`, `{${ps.join(',')}}`, `{${vs.join(',')}}`],
    )
    await onBatch?.(end)
  }
  await updatePanelCells(client, releaseId)
}

/**
 * Brings the current panel (panel_cells) up to date with one release's observations, in the
 * same transaction: a cell takes the release's value unless a newer release already has it.
 */
async function updatePanelCells(client: Queryable, releaseId: number): Promise<void> {
  await client.query(
    `INSERT INTO panel_cells (measure_id, jurisdiction_id, period, value, release_id)
     SELECT measure_id, jurisdiction_id, period, value, release_id FROM observations WHERE release_id = $1
     ON CONFLICT (measure_id, jurisdiction_id, period)
     DO UPDATE SET value = EXCLUDED.value, release_id = EXCLUDED.release_id
     WHERE panel_cells.release_id < EXCLUDED.release_id`,
    [releaseId],
  )
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
    await onProgress(0.02, 'Reading the file')
    const mapping = mappingSchema.parse(release.mapping)
    const table = await readTable(release.file, release.file_name, mapping)
    await onProgress(0.1, `Checking ${table.rows.length.toLocaleString('en')} rows`)

    await client.query('BEGIN')
    began = true
    const registry = await loadRegistry(client)
    const checked = validateTable(table, mapping, registry)
    if (!checked.ok) throw new ImportFailure(problemMessage(checked), checked.problems)
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
    await lockReferences(client, releaseId, measureIds, checked.observations)
    const total = checked.observations.length
    await copyObservations(client, releaseId, checked.observations, measureIds, done =>
      onProgress(0.2 + 0.75 * (done / total), `Imported ${done.toLocaleString('en')} of ${total.toLocaleString('en')} values`))

    await client.query(
      `UPDATE source_releases SET status = 'done', row_count = $2, imported_at = now(), errors = $3 WHERE id = $1`,
      [releaseId, total, checked.warnings.length ? JSON.stringify(checked.warnings.map(w => ({ row: null, column: null, problem: w, warning: true }))) : null])
    const result: ImportResult = { releaseId, rowCount: total, measures: checked.summary.measures, createdMeasures, warnings: checked.warnings }
    await client.query(
      `INSERT INTO audit_log (user_id, action, entity, entity_id, after) VALUES ($1, 'import', 'source_release', $2, $3)`,
      [release.created_by, releaseId, JSON.stringify({ sourceId: release.source_id, ...result })])
    await client.query('COMMIT')
    await onProgress(1, `Imported ${total.toLocaleString('en')} values`)
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
    [releaseId, JSON.stringify(problems.slice(0, 1000))])
}
