/**
 * Panel reads for the engine, the studies and the panel browser: one measure's values by
 * jurisdiction and period, taking for every cell the newest release that has it (highest
 * release id among imported releases). `release` limits the read to given releases (the
 * ones a study run used), `asOf` to releases imported by then: both reproduce older reads.
 * The default read is served by panel_cells (kept current by the importer); reads of older
 * releases by the observations key (release, measure, jurisdiction, period).
 *
 * The default read of a large panel streams its cells with COPY ... TO STDOUT in the order of
 * panel_cells' primary key (no sort in the database) and puts the units in code order here,
 * a block of rows per unit: parsing COPY text is several times faster than row-by-row results,
 * and sorting a million rows by jurisdiction code was most of the query.
 */
import type pg from 'pg'
import { readCurrentCells } from './panelCells'
import { parsePeriod } from '../../shared/utils/periods'
import type { PanelQuery, PanelResponse, PanelRow } from '../../shared/schemas/uploads'

/** A release as the panel names it (imported_at: a Date from a column, an ISO text from JSON). */
interface ReleaseRow { id: number, source: string, label: string | null, imported_at: Date | string | null }

export async function readPanel(pool: pg.Pool, q: Omit<PanelQuery, 'format'>): Promise<PanelResponse> {
  return (await readPanelCells(pool, q)).panel
}

/**
 * The panel, and for the default read (newest release per cell) which releases supplied each
 * jurisdiction's cells: a subset of the units can then say its releases without a new read.
 */
export async function readPanelCells(pool: pg.Pool, q: Omit<PanelQuery, 'format'>): Promise<{ panel: PanelResponse, releasesByUnit: Map<string, number[]> | null }> {
  // the measure and the jurisdictions (the asked ones, or all) in one query, codes in code order
  // (and the imported releases with values of the measure, which the default read names)
  // (named: each connection parses and plans it once)
  const { rows: [measure] } = await pool.query<{ id: number, key: string, label: string, unit: string, frequency: string, units: [number, string][], releases: ReleaseRow[] }>({
    name: 'panel_measure',
    text: `SELECT m.id, m.key, m.label, m.unit, m.frequency,
       (SELECT coalesce(json_agg(json_build_array(j.id, j.code) ORDER BY j.code), '[]') FROM jurisdictions j
         WHERE $2::text[] IS NULL OR j.code = ANY($2::text[])) AS units,
       (SELECT coalesce(json_agg(json_build_object('id', r.id, 'source', s.name, 'label', r.label, 'imported_at', r.imported_at)), '[]')
          FROM source_releases r JOIN sources s ON s.id = r.source_id
         WHERE r.status = 'done' AND (r.measure_ids IS NULL OR m.id = ANY(r.measure_ids))) AS releases
     FROM measures m WHERE m.key = $1`,
    values: [q.measure, q.units.length ? q.units : null],
  })
  if (!measure) throw createError({ statusCode: 404, message: `No measure with key "${q.measure}".` })
  for (const [name, value] of [['from', q.from], ['to', q.to]] as const) {
    if (value && parsePeriod(value).frequency !== measure.frequency) {
      badRequest(`${name} "${value}" is a ${parsePeriod(value).frequency}, but ${measure.key} is recorded by ${measure.frequency}.`, [{ path: name, message: `Give a ${measure.frequency}.` }])
    }
  }
  if (q.from && q.to && q.from > q.to) badRequest(`from (${q.from}) comes after to (${q.to}).`, [{ path: 'from', message: 'from is after to.' }])

  const codes = measure.units.map(([id, code]) => ({ id, code }))
  const params: unknown[] = [measure.id]
  const where: string[] = ['o.measure_id = $1']
  if (q.units.length) {
    const known = new Set(codes.map(r => r.code))
    const unknown = q.units.filter(c => !known.has(c))
    if (unknown.length) badRequest(`Unknown jurisdiction code${unknown.length > 1 ? 's' : ''}: ${unknown.slice(0, 20).join(', ')}.`, unknown.map(c => ({ path: 'units', message: `Unknown code "${c}".` })))
    params.push(codes.map(r => r.id))
    where.push(`o.jurisdiction_id = ANY($${params.length}::int[])`)
  }
  // Canonical periods of one frequency sort as text in time order (four-digit years).
  if (q.from) {
    params.push(q.from)
    where.push(`o.period >= $${params.length}`)
  }
  if (q.to) {
    params.push(q.to)
    where.push(`o.period <= $${params.length}`)
  }
  // Observations exist only for imported releases (an import commits its rows and its
  // "done" together), so the default read needs no look at source_releases.
  if (q.release.length) {
    params.push(q.release)
    where.push(`o.release_id = ANY($${params.length}::int[])`)
  }
  if (q.asOf) {
    params.push(q.asOf)
    // At the millisecond: an importedAt copied from a JSON reply includes that release.
    where.push(`o.release_id IN (SELECT id FROM source_releases WHERE status = 'done' AND date_trunc('milliseconds', imported_at) <= $${params.length}::timestamptz)`)
  }
  // The default read (newest release per cell) comes from panel_cells, which the importer
  // keeps current: one range scan of its primary key. Reads limited to releases or to a
  // moment pick the newest per cell from observations: the rows of those releases (the key
  // starts with the release), sorted so that DISTINCT ON keeps each cell's newest release.
  const current = !q.release.length && !q.asOf
  let out: PanelRow[]
  let used: number[]
  let releasesByUnit: Map<string, number[]> | null = null
  if (current) {
    const cells = await readCurrentCells(pool, measure.id, q.units.length ? params[1] as number[] : null, codes, q.from, q.to)
    out = cells.rows
    used = cells.releaseIds
    releasesByUnit = cells.releasesByUnit
  }
  else {
    const cells = `SELECT DISTINCT ON (o.jurisdiction_id, o.period) o.jurisdiction_id, o.period, o.value, o.release_id
               FROM observations o
               WHERE ${where.join(' AND ')}
               ORDER BY o.jurisdiction_id DESC, o.period DESC, o.release_id DESC`
    const client = await pool.connect()
    let rows: [string, string, number, number][]
    try {
      await client.query('BEGIN READ ONLY')
      // Enough sort memory to order a few million cells without spilling to disk.
      await client.query(`SET LOCAL work_mem = '128MB'`)
      const result = await client.query<[string, string, number, number]>({
        text: `SELECT j.code, c.period, c.value, c.release_id FROM (${cells}) c JOIN jurisdictions j ON j.id = c.jurisdiction_id
               ORDER BY j.code, c.period`,
        values: params,
        rowMode: 'array',
      })
      rows = result.rows
      await client.query('COMMIT')
    }
    finally {
      client.release()
    }
    out = new Array(rows.length)
    for (let i = 0; i < rows.length; i++) {
      const r = rows[i]!
      out[i] = { jurisdiction: r[0], period: r[1], value: r[2] }
    }
    used = [...new Set(rows.map(r => r[3]))]
  }
  // the releases read with the measure, unless one landed in between (then read them now)
  const known = new Map(measure.releases.map(r => [r.id, r]))
  const releases = used.every(id => known.has(id))
    ? used.map(id => known.get(id)!).sort((a, b) => a.id - b.id)
    : used.length
      ? (await pool.query<ReleaseRow>(
          `SELECT r.id, s.name AS source, r.label, r.imported_at FROM source_releases r JOIN sources s ON s.id = r.source_id
           WHERE r.id = ANY($1::int[]) ORDER BY r.id`, [used])).rows
      : []
  const panel = {
    measure: measure.key,
    label: measure.label,
    unit: measure.unit,
    frequency: measure.frequency,
    rows: out,
    releases: releases.map(r => ({ id: r.id, source: r.source, label: r.label, importedAt: r.imported_at === null ? null : new Date(r.imported_at).toISOString() })),
  }
  return { panel, releasesByUnit }
}

const csvField = (s: string) => (/[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s)

export function panelCsv(panel: PanelResponse): string {
  const lines = ['jurisdiction,period,value']
  for (const r of panel.rows) lines.push(`${csvField(r.jurisdiction)},${r.period},${r.value}`)
  return `${lines.join('\n')}\n`
}
