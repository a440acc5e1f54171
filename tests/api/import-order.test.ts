/**
 * The importer keeps panel_cells (the current panel) equal to the newest release of every cell
 * when releases are imported out of order and at the same time: imports of one measure take
 * turns (an advisory lock per measure), and a cell a newer release holds keeps its value.
 * Runs importRelease (the upload job's own function) straight against the test database.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closePool, sql, testPool } from '../support/db'
import { runTag } from '../support/uploads'
import { checksumOf } from '../../server/services/uploads/checksum'
import { importRelease } from '../../server/services/uploads/importRelease'

const tag = runTag().toLowerCase()
const key = `order_${tag}`
const codes = [`O${tag}-1`, `O${tag}-2`].map(c => c.toUpperCase())
const mapping = { layout: 'long', jurisdiction: 'code', period: 'month', values: { value: key } }
let sourceId: number

const csv = (rows: [string, string, number][]) => Buffer.from(`code,month,value\n${rows.map(r => r.join(',')).join('\n')}\n`)

async function pendingRelease(file: Buffer, label: string): Promise<number> {
  const [row] = await sql<{ id: number }>(
    `INSERT INTO source_releases (source_id, label, file_name, checksum, file, size_bytes, mapping, status)
     VALUES ($1, $2, $3, $4, $5, $6, $7, 'importing') RETURNING id`,
    [sourceId, label, `${label}.csv`, checksumOf(file), file, file.length, JSON.stringify(mapping)])
  return row!.id
}

async function cells() {
  return sql<{ code: string, period: string, value: number, release_id: number }>(
    `SELECT j.code, c.period, c.value, c.release_id FROM panel_cells c JOIN jurisdictions j ON j.id = c.jurisdiction_id
     JOIN measures m ON m.id = c.measure_id WHERE m.key = $1 ORDER BY j.code, c.period`, [key])
}

beforeAll(async () => {
  for (const code of codes) await sql(`INSERT INTO jurisdictions (code, name, kind) VALUES ($1, $1, 'municipality')`, [code])
  await sql(`INSERT INTO measures (key, label, unit, kind, frequency) VALUES ($1, 'Order test', 'count', 'outcome', 'month')`, [key])
  sourceId = (await sql<{ id: number }>(`INSERT INTO sources (name, publisher) VALUES ($1, 'Test') RETURNING id`, [`Order ${tag}`]))[0]!.id
})
afterAll(closePool)

describe('import order and the current panel', () => {
  it('an older release imported after a newer one fills only the cells the newer one lacks', async () => {
    const older = await pendingRelease(csv([[codes[0]!, '2021-01', 1], [codes[1]!, '2021-01', 1], [codes[1]!, '2021-02', 1]]), 'older')
    const newer = await pendingRelease(csv([[codes[0]!, '2021-01', 2], [codes[1]!, '2021-01', 2]]), 'newer')
    await importRelease(testPool(), newer)
    await importRelease(testPool(), older)
    expect(await cells()).toEqual([
      { code: codes[0], period: '2021-01', value: 2, release_id: newer },
      { code: codes[1], period: '2021-01', value: 2, release_id: newer },
      { code: codes[1], period: '2021-02', value: 1, release_id: older },
    ])
  })

  it('two imports of the same measure at once both land, and the newest value of each cell wins', async () => {
    const a = await pendingRelease(csv([[codes[0]!, '2021-03', 3], [codes[1]!, '2021-03', 3]]), 'a')
    const b = await pendingRelease(csv([[codes[0]!, '2021-03', 4], [codes[0]!, '2021-04', 4]]), 'b')
    const results = await Promise.all([importRelease(testPool(), b), importRelease(testPool(), a)])
    expect(results.map(r => r.rowCount)).toEqual([2, 2])
    const after = (await cells()).filter(c => c.period >= '2021-03')
    expect(after).toEqual([
      { code: codes[0], period: '2021-03', value: 4, release_id: b },
      { code: codes[0], period: '2021-04', value: 4, release_id: b },
      { code: codes[1], period: '2021-03', value: 3, release_id: a },
    ])
  })

  it('values arrive as the very doubles the file gives (binary COPY), in observations and the current panel', async () => {
    const texts = ['0.1', '-0.000123456789012345', '123456789.123456789', '1e-300', '-1.7976931348623157e308', '5e-324', '0.30000000000000004', '-0']
    const file = Buffer.from(`code,month,value\n${texts.map((t, i) => `${codes[0]},2022-${String(i + 1).padStart(2, '0')},${t}`).join('\n')}\n`)
    const id = await pendingRelease(file, 'exact')
    await importRelease(testPool(), id)
    const stored = await sql<{ period: string, value: number }>(
      `SELECT o.period, o.value FROM observations o WHERE o.release_id = $1 ORDER BY o.period`, [id])
    expect(stored.map(r => r.value)).toEqual(texts.map(Number))
    const current = (await cells()).filter(c => c.period.startsWith('2022-'))
    expect(current.map(c => c.value)).toEqual(texts.map(Number))
  })
})
