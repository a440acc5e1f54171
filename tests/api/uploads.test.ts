/**
 * Uploads of releases end to end: good long CSV and wide XLSX files go in through the job;
 * every kind of bad file is refused with its row and column and leaves the database exactly
 * as it was; identical re-uploads are caught; a second release wins for reads while the
 * first stays readable; a failed import leaves no partial release; roles are enforced.
 */
import ExcelJS from 'exceljs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { as, type Client } from '../support/http'
import { closePool, sql, testPool } from '../support/db'
import { dataFingerprint, runTag, uploadRelease, waitForJob } from '../support/uploads'
import { importRelease } from '../../server/services/uploads/importRelease'
import { copyObservations } from '../../server/services/uploads/copyObservations'
import type { Observations } from '../../server/services/uploads/validate'

let admin: Client
let analyst: Client
let reviewer: Client
let sourceId: number
const tag = runTag()
const A = `U${tag}-A`
const B = `U${tag}-B`
const C = `U${tag}-C`
const filings = `filings_${tag.toLowerCase()}`
const households = `households_${tag.toLowerCase()}`
const mapping = { layout: 'long', jurisdiction: 'code', period: 'month', values: { filings, households } }

function goodCsv(scale = 1) {
  const lines = ['code,month,filings,households']
  for (const code of [A, B, C]) {
    for (let m = 1; m <= 12; m++) lines.push(`${code},2020-${String(m).padStart(2, '0')},${(m + code.length) * scale},${1000 + m}`)
  }
  return `${lines.join('\n')}\n`
}

beforeAll(async () => {
  ;[admin, analyst, reviewer] = await Promise.all([as('admin'), as('analyst'), as('reviewer')])
  const created = async (path: string, body: object) => {
    const res = await admin.post(path, body)
    expect(res.status, `${path}: ${JSON.stringify(res.body)}`).toBe(201)
    return res
  }
  for (const code of [A, B, C]) await created('/api/jurisdictions', { code, name: `Town ${code}`, kind: 'municipality' })
  await created('/api/measures', { key: filings, label: 'Eviction filings', unit: 'filings', kind: 'outcome', frequency: 'month' })
  await created('/api/measures', { key: households, label: 'Renter households', unit: 'households', kind: 'denominator', frequency: 'month' })
  const s = await created('/api/sources', { name: `Court statistics ${tag}`, publisher: 'Court office' })
  sourceId = s.body.id
})
afterAll(closePool)

async function panel(client: Client, query: string) {
  const res = await client.get(`/api/panel?${query}`)
  expect(res.status, JSON.stringify(res.body)).toBe(200)
  return res.body as { rows: { jurisdiction: string, period: string, value: number }[], releases: { id: number }[] }
}

describe('good files', () => {
  let firstRelease: number

  it('a long CSV imports through a job with progress to done, and reads back', async () => {
    const res = await uploadRelease(analyst, sourceId, goodCsv(), 'courts-2020.csv', mapping, 'First release')
    expect(res.status, JSON.stringify(res.body)).toBe(202)
    expect(res.body).toMatchObject({ jobId: expect.any(String), releaseId: expect.any(Number) })
    firstRelease = res.body.releaseId
    const job = await waitForJob(analyst, res.body.jobId)
    expect(job).toMatchObject({ state: 'done', progress: 1, result: { releaseId: firstRelease, rowCount: 72 } })
    const p = await panel(reviewer, `measure=${filings}&units=${A},${B}&from=2020-03&to=2020-05`)
    expect(p.rows).toEqual([
      { jurisdiction: A, period: '2020-03', value: 3 + A.length },
      { jurisdiction: A, period: '2020-04', value: 4 + A.length },
      { jurisdiction: A, period: '2020-05', value: 5 + A.length },
      { jurisdiction: B, period: '2020-03', value: 3 + B.length },
      { jurisdiction: B, period: '2020-04', value: 4 + B.length },
      { jurisdiction: B, period: '2020-05', value: 5 + B.length },
    ])
    const [release] = await sql('SELECT status, row_count, checksum, octet_length(file) AS bytes, imported_at FROM source_releases WHERE id = $1', [firstRelease])
    expect(release).toMatchObject({ status: 'done', row_count: 72, bytes: Buffer.byteLength(goodCsv()) })
    expect(release.checksum).toMatch(/^[0-9a-f]{64}$/)
    const source = await reviewer.get(`/api/sources/${sourceId}`)
    expect(source.body.releases[0]).toMatchObject({ id: firstRelease, label: 'First release', status: 'done', rowCount: 72, jobId: res.body.jobId })
  })

  it('an identical re-upload is detected and says so, writing nothing', async () => {
    const before = await dataFingerprint()
    const res = await uploadRelease(admin, sourceId, goodCsv(), 'same-again.csv', mapping)
    expect(res.status).toBe(409)
    expect(res.body.message).toContain(`identical to release #${firstRelease}`)
    expect(await dataFingerprint()).toEqual(before)
  })

  it('a second release wins for reads; the first stays readable by release and by date', async () => {
    const [{ imported_at: firstAt }] = await sql('SELECT imported_at FROM source_releases WHERE id = $1', [firstRelease])
    const res = await uploadRelease(analyst, sourceId, goodCsv(10), 'courts-2020-revised.csv', mapping, 'Revised')
    expect(res.status).toBe(202)
    expect((await waitForJob(analyst, res.body.jobId)).state).toBe('done')
    const latest = await panel(analyst, `measure=${filings}&units=${A}&from=2020-01&to=2020-02`)
    expect(latest.rows.map(r => r.value)).toEqual([(1 + A.length) * 10, (2 + A.length) * 10])
    expect(latest.releases.map(r => r.id)).toEqual([res.body.releaseId])
    const old = await panel(analyst, `measure=${filings}&units=${A}&from=2020-01&to=2020-02&release=${firstRelease}`)
    expect(old.rows.map(r => r.value)).toEqual([1 + A.length, 2 + A.length])
    const asOf = await panel(analyst, `measure=${filings}&units=${A}&from=2020-01&to=2020-02&asOf=${new Date(firstAt).toISOString()}`)
    expect(asOf.rows.map(r => r.value)).toEqual([1 + A.length, 2 + A.length])
    // The current panel the default read uses agrees with the newest release of every cell.
    const drift = await sql(`SELECT o.* FROM (
        SELECT DISTINCT ON (measure_id, jurisdiction_id, period) measure_id, jurisdiction_id, period, value, release_id
        FROM observations ORDER BY measure_id, jurisdiction_id, period, release_id DESC) o
      FULL JOIN panel_cells c USING (measure_id, jurisdiction_id, period)
      WHERE c.release_id IS DISTINCT FROM o.release_id OR c.value IS DISTINCT FROM o.value`)
    expect(drift).toEqual([])
    const csv = await analyst.get(`/api/panel?measure=${filings}&units=${A}&to=2020-02&format=csv`)
    expect(csv.headers.get('content-type')).toContain('text/csv')
    expect(csv.body).toBe(`jurisdiction,period,value\n${A},2020-01,${(1 + A.length) * 10}\n${A},2020-02,${(2 + A.length) * 10}\n`)
  })

  it('a wide XLSX imports, with a rate per 1,000 derived on request', async () => {
    const wb = new ExcelJS.Workbook()
    const ws = wb.addWorksheet('Filings')
    ws.addRow(['code', 'name', '2021-01', '2021-02', new Date(Date.UTC(2021, 2, 1))])
    ws.addRow([A, 'Town A', 10, 20, 30])
    ws.addRow([B, 'Town B', 1, null, 3])
    const file = Buffer.from(await wb.xlsx.writeBuffer())
    const res = await uploadRelease(analyst, sourceId, file, 'wide.xlsx', { layout: 'wide', jurisdiction: 'code', measure: filings, ignore: ['name'] })
    expect(res.status, JSON.stringify(res.body)).toBe(202)
    const job = await waitForJob(analyst, res.body.jobId)
    expect(job.result).toMatchObject({ rowCount: 5 })
    const p = await panel(analyst, `measure=${filings}&units=${A},${B}&from=2021-01`)
    expect(p.rows).toEqual([
      { jurisdiction: A, period: '2021-01', value: 10 }, { jurisdiction: A, period: '2021-02', value: 20 }, { jurisdiction: A, period: '2021-03', value: 30 },
      { jurisdiction: B, period: '2021-01', value: 1 }, { jurisdiction: B, period: '2021-03', value: 3 },
    ])

    const rateKey = `rate_${tag.toLowerCase()}`
    const rated = await uploadRelease(analyst, sourceId, 'code,month,filings,households\n' + `${A},2022-01,5,2000\n${B},2022-01,3,1500\n`, 'rates.csv',
      { ...mapping, rates: [{ key: rateKey, count: filings, denominator: households, per: 1000 }] })
    expect(rated.status, JSON.stringify(rated.body)).toBe(202)
    expect((await waitForJob(analyst, rated.body.jobId)).result.createdMeasures).toEqual([rateKey])
    expect((await panel(reviewer, `measure=${rateKey}`)).rows).toEqual([{ jurisdiction: A, period: '2022-01', value: 2.5 }, { jurisdiction: B, period: '2022-01', value: 2 }])
    expect((await reviewer.get('/api/measures')).body.find((m: { key: string }) => m.key === rateKey)).toMatchObject({ unit: 'per 1,000 renter households', frequency: 'month' })
  })
})

describe('references', () => {
  it('a jurisdiction with imported values cannot be deleted (the values stay readable)', async () => {
    const res = await admin.delete(`/api/jurisdictions/${A}`)
    expect(res.status).toBe(409)
    expect(res.body.message).toMatch(/observations refer to it/)
    expect((await panel(reviewer, `measure=${filings}&units=${A}`)).rows.length).toBeGreaterThan(0)
  })
})

describe('bad files each give their clear error and leave the database exactly as before', () => {
  const header = 'code,month,filings,households\n'
  const cases: [string, () => { file: Buffer | string, name: string, map?: unknown }, number, RegExp, { row: number | null, column: string | null } | null][] = [
    ['a 0-byte file', () => ({ file: Buffer.alloc(0), name: 'zero.csv' }), 400, /empty \(0 bytes\)/, null],
    ['an empty file (blank lines only)', () => ({ file: '\n \n\n', name: 'blank.csv' }), 400, /no data/, null],
    ['a header without rows', () => ({ file: header, name: 'header.csv' }), 400, /no values to import/, null],
    ['the wrong delimiter', () => ({ file: header.replaceAll(',', ':') + `${A}:2020-01:1:2\n`, name: 'colons.csv' }), 400, /single column.*wrong delimiter/, { row: 1, column: 'code:month:filings:households' }],
    ['a forced delimiter that does not fit', () => ({ file: header.replaceAll(',', ';') + `${A};2020-01;1;2\n`, name: 'semi.csv', map: { ...mapping, delimiter: ',' } }), 400, /separated by ";"/, { row: 1, column: 'code;month;filings;households' }],
    ['a text cell among numbers', () => ({ file: header + `${A},2023-01,4,1000\n${A},2023-02,four,1000\n`, name: 'text.csv' }), 400, /"four" is not a number/, { row: 3, column: 'filings' }],
    ['an unknown code', () => ({ file: header + `${A},2023-01,4,1000\nNOWHERE-1,2023-01,4,1000\n`, name: 'unknown.csv' }), 400, /Unknown jurisdiction code "NOWHERE-1"/, { row: 3, column: 'code' }],
    ['duplicate rows', () => ({ file: header + `${A},2023-01,4,1000\n${B},2023-01,4,1000\n${A},2023-01,5,1000\n`, name: 'dup.csv' }), 400, /Duplicate: .* also in row 2/, { row: 4, column: 'filings' }],
    ['a bad row as the very last line', () => ({ file: header + `${A},2023-01,4,1000\n${B},2023-01,4,1000\nSource: court office`, name: 'footer.csv' }), 400, /last line looks cut off/, { row: 4, column: null }],
    ['an unparseable period', () => ({ file: header + `${A},Jan 2023,4,1000\n`, name: 'period.csv' }), 400, /cannot read "Jan 2023"/, { row: 2, column: 'month' }],
    ['a period of the wrong frequency', () => ({ file: header + `${A},2023-Q1,4,1000\n`, name: 'freq.csv' }), 400, /is a quarter, but the measure is recorded by month/, { row: 2, column: 'month' }],
    ['a mapping naming a missing column', () => ({ file: header + `${A},2023-01,4,1000\n`, name: 'cols.csv', map: { ...mapping, period: 'period' } }), 400, /No column "period"/, { row: 1, column: 'period' }],
    ['a mapping that is not JSON', () => ({ file: header + `${A},2023-01,4,1000\n`, name: 'map.csv', map: '{layout: long' }), 400, /not valid JSON/, null],
  ]

  it.each(cases)('%s', async (_, make, status, message, where) => {
    const { file, name, map } = make()
    const before = await dataFingerprint()
    const res = await uploadRelease(analyst, sourceId, file, name, map ?? mapping)
    expect(res.status, JSON.stringify(res.body)).toBe(status)
    expect(res.body.message).toMatch(message)
    if (where) expect(res.body.data.errors).toContainEqual(expect.objectContaining({ ...where, problem: expect.any(String) }))
    expect(await dataFingerprint()).toEqual(before)
  })

  it('a file over the size limit gets 413 with the limit in the message', async () => {
    const { body: limits } = await analyst.get('/api/uploads')
    const before = await dataFingerprint()
    const big = Buffer.alloc(limits.limitBytes + 1, 'a')
    const res = await uploadRelease(analyst, sourceId, big, 'big.csv', mapping)
    expect(res.status).toBe(413)
    expect(res.body.message).toContain(`limit of ${limits.limit}`)
    expect(await dataFingerprint()).toEqual(before)
  })

  it('every problem of a file is listed, not only the first', async () => {
    const res = await uploadRelease(analyst, sourceId, header + `${A},2024-01,x,1\nZZ,2024-01,1,1\n${A},2024-13,1,1\n`, 'many.csv', mapping)
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(/^The file has 3 problems; nothing was imported/)
    expect(res.body.data.errors.map((e: { row: number }) => e.row)).toEqual([2, 3, 4])
  })
})

describe('failed imports', () => {
  it('an import that fails after inserting rows leaves no partial release', async () => {
    const [release] = await sql(
      `INSERT INTO source_releases (source_id, label, file_name, checksum, file, size_bytes, mapping, status)
       VALUES ($1, 'doomed', 'doomed.csv', $2, $3, $4, $5, 'importing') RETURNING id`,
      [sourceId, `x${tag}`, Buffer.from(goodCsv(7)), Buffer.byteLength(goodCsv(7)), JSON.stringify(mapping)])
    const crash = async (_: number, message: string) => {
      if (message.startsWith('Imported ')) throw new Error('connection lost')
    }
    await expect(importRelease(testPool(), release.id, crash)).rejects.toThrow('connection lost')
    const [after] = await sql('SELECT status, row_count, errors FROM source_releases WHERE id = $1', [release.id])
    expect(after).toMatchObject({ status: 'failed', row_count: 0, errors: [{ row: null, column: null, problem: 'connection lost' }] })
    expect(await sql('SELECT 1 FROM observations WHERE release_id = $1', [release.id])).toEqual([])
    expect(await sql('SELECT 1 FROM panel_cells WHERE release_id = $1', [release.id])).toEqual([])
    const reads = await panel(reviewer, `measure=${filings}&units=${A}&from=2020-01&to=2020-01`)
    expect(reads.rows[0]!.value).toBe((1 + A.length) * 10)
  })

  it('a COPY that fails part-way leaves no rows, and the connection serves the next import', async () => {
    const [release] = await sql(
      `INSERT INTO source_releases (source_id, label, file_name, checksum, file, size_bytes, mapping, status)
       VALUES ($1, 'copy', 'copy.csv', $2, '', 0, $3, 'importing') RETURNING id`,
      [sourceId, `c${tag}`, JSON.stringify(mapping)])
    const [measure] = await sql('SELECT id FROM measures WHERE key = $1', [filings])
    const places = await sql('SELECT id FROM jurisdictions WHERE code = ANY($1) ORDER BY code', [[A, B, C]])
    // 3 places x 12 months, sent 5 rows per chunk: the failure comes with the third chunk
    const obs: Observations = {
      length: 36,
      jurisdictionIds: Int32Array.from({ length: 36 }, (_, i) => places[i % 3].id),
      measureIndex: new Uint16Array(36),
      measureKeys: [filings],
      periods: Array.from({ length: 36 }, (_, i) => `2031-${String(Math.floor(i / 3) + 1).padStart(2, '0')}`),
      values: Float64Array.from({ length: 36 }, (_, i) => i + 0.25),
    }
    const client = await testPool().connect()
    try {
      await client.query('BEGIN')
      const crash = (done: number) => {
        if (done >= 15) throw new Error('disk full')
      }
      await expect(copyObservations(client, release.id, obs, [measure.id], crash, 5)).rejects.toThrow('disk full')
      await client.query('ROLLBACK')
      expect(await sql('SELECT 1 FROM observations WHERE release_id = $1', [release.id])).toEqual([])
      expect(await sql('SELECT 1 FROM panel_cells WHERE release_id = $1', [release.id])).toEqual([])

      // the same connection, a whole COPY rolled back: still nothing
      await client.query('BEGIN')
      await copyObservations(client, release.id, obs, [measure.id], undefined, 5)
      expect((await client.query('SELECT count(*)::int AS n FROM observations WHERE release_id = $1', [release.id])).rows[0].n).toBe(36)
      await client.query('ROLLBACK')
      expect(await sql('SELECT 1 FROM observations WHERE release_id = $1', [release.id])).toEqual([])
      expect(await sql('SELECT 1 FROM panel_cells WHERE release_id = $1', [release.id])).toEqual([])
    }
    finally {
      client.release()
    }
    await sql(`UPDATE source_releases SET status = 'failed' WHERE id = $1`, [release.id])
  })

  it('a failed release does not block uploading the same file again', async () => {
    const res = await uploadRelease(analyst, sourceId, goodCsv(7), 'retry.csv', mapping)
    expect(res.status, JSON.stringify(res.body)).toBe(202)
    expect((await waitForJob(analyst, res.body.jobId)).state).toBe('done')
  })
})

describe('roles and job visibility', () => {
  it('a reviewer cannot upload or preview', async () => {
    const before = await dataFingerprint()
    const res = await uploadRelease(reviewer, sourceId, goodCsv(3), 'r.csv', mapping)
    expect(res.status).toBe(403)
    const form = new FormData()
    form.append('file', new Blob([goodCsv(3)]), 'r.csv')
    expect((await reviewer.request('POST', `/api/sources/${sourceId}/releases/preview`, form)).status).toBe(403)
    expect(await dataFingerprint()).toEqual(before)
  })

  it('a job is visible to its creator and admins only', async () => {
    const res = await uploadRelease(analyst, sourceId, goodCsv(4), 'mine.csv', mapping)
    await waitForJob(analyst, res.body.jobId)
    expect((await admin.get(`/api/jobs/${res.body.jobId}`)).status).toBe(200)
    expect((await reviewer.get(`/api/jobs/${res.body.jobId}`)).status).toBe(404)
    expect((await analyst.get('/api/jobs/not-a-uuid')).status).toBe(400)
  })

  it('preview shows columns, first rows, a suggested mapping and the problems, writing nothing', async () => {
    const before = await dataFingerprint()
    const form = new FormData()
    form.append('file', new Blob([`code,month,filings,households\n${A},2020-01,1,2\nNOPE,2020-01,1,2\n`]), 'p.csv')
    const plain = await analyst.request('POST', `/api/sources/${sourceId}/releases/preview`, form)
    expect(plain.status).toBe(200)
    expect(plain.body).toMatchObject({ format: 'csv', delimiter: ',', columns: ['code', 'month', 'filings', 'households'], rowCount: 2, suggestion: { layout: 'long', jurisdiction: 'code', period: 'month' } })
    form.append('mapping', JSON.stringify(mapping))
    const checked = await analyst.request('POST', `/api/sources/${sourceId}/releases/preview`, form)
    expect(checked.body.validation).toMatchObject({ ok: false, problemCount: 1, problems: [{ row: 3, column: 'code' }] })
    expect(await dataFingerprint()).toEqual(before)
  })
})
