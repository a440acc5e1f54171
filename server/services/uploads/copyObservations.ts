/**
 * The bulk insert of one release's observations through COPY, inside the caller's
 * transaction (all or nothing stays the caller's: it rolls back on any error).
 *
 * 1. COPY the rows straight into observations, in the order of its key (release, measure,
 *    jurisdiction, period), so its index fills page after page (a staging table and an
 *    INSERT ... SELECT cost a second more per million rows).
 * 2. panel_cells (the current panel) in set operations joined to the release's rows: an UPDATE
 *    for the cells this release makes newest, then, unless the update already covered every
 *    row, an INSERT of the cells the panel does not have yet (about twice as fast as a
 *    row-by-row upsert, ON CONFLICT). The caller holds the import lock of each measure
 *    (importRelease), so no other import adds the same cells in between; a cell that a newer
 *    release already holds keeps its value.
 *
 * The rows travel in COPY's binary format: the values arrive as the very doubles that were
 * checked, with nothing formatted as text and parsed back on either side.
 */
import { Readable } from 'node:stream'
import { pipeline } from 'node:stream/promises'
import { from as copyFrom } from 'pg-copy-streams'
import type pg from 'pg'
import type { Observations } from './validate'

type Queryable = Pick<pg.PoolClient, 'query'>

/** Rows per chunk written to the COPY stream (and per progress call). */
export const COPY_CHUNK_ROWS = 50_000

/** Whether `a` comes before `b` in the panel's key (measure, jurisdiction, period). */
function before(obs: Observations, measureIds: number[], a: number, b: number): number {
  const m = obs.measureIndex
  const j = obs.jurisdictionIds
  const p = obs.periods
  return (measureIds[m[a]!]! - measureIds[m[b]!]!) || (j[a]! - j[b]!) || (p[a]! < p[b]! ? -1 : p[a]! > p[b]! ? 1 : 0)
}

/**
 * Row order of the panel's key (measure, jurisdiction, period), so index pages fill in sequence;
 * a file already in that order (the usual one: by jurisdiction, then period) is not sorted again.
 */
function panelOrder(obs: Observations, measureIds: number[]): Uint32Array {
  const order = new Uint32Array(obs.length)
  for (let i = 0; i < obs.length; i++) order[i] = i
  let sorted = true
  for (let i = 1; i < obs.length && sorted; i++) sorted = before(obs, measureIds, i - 1, i) <= 0
  if (!sorted) order.sort((a, b) => before(obs, measureIds, a, b))
  return order
}

/** COPY's binary format: its signature, no flags, no header extension; each tuple a field count and length-prefixed fields; -1 at the end. */
const BINARY_HEADER = Buffer.concat([Buffer.from('PGCOPY\n\xff\r\n\0', 'latin1'), Buffer.alloc(8)])
const BINARY_TRAILER = Buffer.from([0xFF, 0xFF])
const FIELDS = 5

/**
 * The observations as COPY binary tuples (release, measure, jurisdiction, period, value), a chunk
 * at a time, reporting progress after each. Binary: no number is written out as text and parsed
 * back (values go in as the very doubles that were checked), and periods need no escaping.
 */
async function* copyTuples(releaseId: number, obs: Observations, measureIds: number[], chunkRows: number, onBatch?: (done: number) => Promise<void> | void): AsyncGenerator<Buffer> {
  const order = panelOrder(obs, measureIds)
  const periodBytes = new Map<string, Buffer>()
  yield BINARY_HEADER
  for (let start = 0; start < obs.length; start += chunkRows) {
    const end = Math.min(obs.length, start + chunkRows)
    let size = 0
    for (let k = start; k < end; k++) {
      const period = obs.periods[order[k]!]!
      let bytes = periodBytes.get(period)
      if (bytes === undefined) periodBytes.set(period, (bytes = Buffer.from(period, 'utf8')))
      size += 2 + 3 * 8 + 4 + bytes.length + 12
    }
    const chunk = Buffer.allocUnsafe(size)
    let at = 0
    for (let k = start; k < end; k++) {
      const i = order[k]!
      const bytes = periodBytes.get(obs.periods[i]!)!
      at = chunk.writeInt16BE(FIELDS, at)
      at = chunk.writeInt32BE(4, at)
      at = chunk.writeInt32BE(releaseId, at)
      at = chunk.writeInt32BE(4, at)
      at = chunk.writeInt32BE(measureIds[obs.measureIndex[i]!]!, at)
      at = chunk.writeInt32BE(4, at)
      at = chunk.writeInt32BE(obs.jurisdictionIds[i]!, at)
      at = chunk.writeInt32BE(bytes.length, at)
      at += bytes.copy(chunk, at)
      at = chunk.writeInt32BE(8, at)
      at = chunk.writeDoubleBE(obs.values[i]!, at)
    }
    yield chunk
    await onBatch?.(end)
  }
  yield BINARY_TRAILER
}

/**
 * Inserts the observations of release `releaseId` and brings panel_cells up to date, in the
 * caller's open transaction. `onBatch(done)` is called after each chunk is sent; an error it
 * throws aborts the COPY and reaches the caller.
 */
export async function copyObservations(
  client: Queryable,
  releaseId: number,
  obs: Observations,
  measureIds: number[],
  onBatch?: (done: number) => Promise<void> | void,
  chunkRows = COPY_CHUNK_ROWS,
): Promise<void> {
  const copy = client.query(copyFrom(`COPY observations (release_id, measure_id, jurisdiction_id, period, value) FROM STDIN (FORMAT binary)`))
  await pipeline(Readable.from(copyTuples(releaseId, obs, measureIds, chunkRows, onBatch)), copy)
  // The release's rows are one range of the observations key. Statistics do not know the new
  // release yet, so the planner is told how to join a million of them: hash, not index probes.
  await client.query(`SET LOCAL enable_nestloop = off`)
  const updated = await client.query(
    `UPDATE panel_cells p SET value = o.value, release_id = $1
     FROM observations o
     WHERE o.release_id = $1 AND p.measure_id = o.measure_id AND p.jurisdiction_id = o.jurisdiction_id AND p.period = o.period
       AND p.release_id < $1`,
    [releaseId])
  // Every cell existed and is now this release's: nothing to add (a republished release
  // skips the search for new cells, as long as the update).
  if (updated.rowCount !== obs.length) {
    await client.query(
      `INSERT INTO panel_cells (measure_id, jurisdiction_id, period, value, release_id)
       SELECT o.measure_id, o.jurisdiction_id, o.period, o.value, $1 FROM observations o
       WHERE o.release_id = $1
         AND NOT EXISTS (SELECT 1 FROM panel_cells p WHERE p.measure_id = o.measure_id AND p.jurisdiction_id = o.jurisdiction_id AND p.period = o.period)`,
      [releaseId])
  }
  await client.query(`RESET enable_nestloop`)
}
