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
 * Periods are canonical texts (digits, "-", "Q", "W"); any other character that COPY's
 * text format treats specially is escaped all the same. Values are written in JavaScript's
 * shortest round-trip form, which PostgreSQL reads back to the same double.
 */
import { Readable } from 'node:stream'
import { pipeline } from 'node:stream/promises'
import { from as copyFrom } from 'pg-copy-streams'
import type pg from 'pg'
import type { Observations } from './validate'

type Queryable = Pick<pg.PoolClient, 'query'>

/** Rows per chunk written to the COPY stream (and per progress call). */
export const COPY_CHUNK_ROWS = 50_000

const SPECIAL = /[\\\t\n\r]/
const escapeCopy = (s: string) => (SPECIAL.test(s) ? s.replace(/[\\\t\n\r]/g, c => (c === '\\' ? '\\\\' : c === '\t' ? '\\t' : c === '\n' ? '\\n' : '\\r')) : s)

/** Row order of the panel's key (measure, jurisdiction, period): index pages fill in sequence. */
function panelOrder(obs: Observations, measureIds: number[]): Uint32Array {
  const order = new Uint32Array(obs.length)
  for (let i = 0; i < obs.length; i++) order[i] = i
  const m = obs.measureIndex
  const j = obs.jurisdictionIds
  const p = obs.periods
  order.sort((a, b) => (measureIds[m[a]!]! - measureIds[m[b]!]!) || (j[a]! - j[b]!) || (p[a]! < p[b]! ? -1 : p[a]! > p[b]! ? 1 : 0))
  return order
}

/** COPY text lines of observations, a chunk at a time, reporting progress after each. */
async function* copyLines(releaseId: number, obs: Observations, measureIds: number[], chunkRows: number, onBatch?: (done: number) => Promise<void> | void): AsyncGenerator<string> {
  const order = panelOrder(obs, measureIds)
  const periodText = new Map<string, string>()
  for (let start = 0; start < obs.length; start += chunkRows) {
    const end = Math.min(obs.length, start + chunkRows)
    let chunk = ''
    for (let k = start; k < end; k++) {
      const i = order[k]!
      const period = obs.periods[i]!
      let p = periodText.get(period)
      if (p === undefined) periodText.set(period, (p = escapeCopy(period)))
      chunk += `${releaseId}\t${measureIds[obs.measureIndex[i]!]!}\t${obs.jurisdictionIds[i]!}\t${p}\t${obs.values[i]!}\n`
    }
    yield chunk
    await onBatch?.(end)
  }
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
  const copy = client.query(copyFrom(`COPY observations (release_id, measure_id, jurisdiction_id, period, value) FROM STDIN`))
  await pipeline(Readable.from(copyLines(releaseId, obs, measureIds, chunkRows, onBatch)), copy)
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
