/**
 * The malformed-upload corpus (tests/fixtures/malformed: files written by make.ts, expectations
 * in manifest.json) sent through the upload route one by one: each gets its status and its
 * message, a small reply (values quoted at most 40 characters, at most 100 problems listed),
 * in bounded time, and a refused file leaves every table as it was. Files that are fine after
 * tolerant reading (byte-order marks, CRLF, UTF-16, Windows-1252, a workbook named .csv, merged
 * cells) import, and their values are checked. While a large file is read, the server keeps
 * answering other requests. The expected messages are this project's own (manifest.json).
 */
import { readFileSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { as, type Client } from '../support/http'
import { closePool, sql } from '../support/db'
import { dataFingerprint, runTag, uploadForm, uploadRelease, waitForJob } from '../support/uploads'
import { ensureCorpus, MAKERS } from '../fixtures/malformed/make'

interface Entry {
  file: string
  about: string
  status: number
  message?: string
  mapping?: unknown
  accepted?: [string, string, number][]
  warning?: string
  problemCount?: number
  listed?: number
}
const manifest = JSON.parse(readFileSync(new URL('../fixtures/malformed/manifest.json', import.meta.url), 'utf8')) as { mapping: unknown, files: Entry[] }

const MAX_REPLY_BYTES = 64 * 1024
const MAX_REPLY_MS = 15_000

let admin: Client
let analyst: Client
let sourceId: number
let dir: string

async function createOnce(path: string, body: object) {
  const res = await admin.post(path, body)
  expect([201, 409], `${path}: ${JSON.stringify(res.body)}`).toContain(res.status)
}

beforeAll(async () => {
  dir = await ensureCorpus()
  ;[admin, analyst] = await Promise.all([as('admin'), as('analyst')])
  await createOnce('/api/jurisdictions', { code: 'MF-A', name: 'Montaña Alta', kind: 'municipality' })
  await createOnce('/api/jurisdictions', { code: 'MF-B', name: 'Vallée Basse', kind: 'municipality' })
  await createOnce('/api/measures', { key: 'mf_count', label: 'Counted cases', unit: 'cases', kind: 'outcome', frequency: 'month' })
  const s = await admin.post('/api/sources', { name: `Corpus source ${runTag()}`, publisher: 'Test office' })
  expect(s.status).toBe(201)
  sourceId = s.body.id
}, 120_000)
afterAll(closePool)

describe('the corpus', () => {
  it('has at least 30 files, each described in the manifest', () => {
    const described = new Set(manifest.files.map(f => f.file))
    expect(Object.keys(MAKERS).length).toBeGreaterThanOrEqual(30)
    expect([...described].sort()).toEqual(Object.keys(MAKERS).sort())
  })

  it.each(manifest.files.map(f => [`${f.file}: ${f.about}`, f] as const))('%s', async (_, entry) => {
    const file = readFileSync(`${dir}${entry.file}`)
    const before = await dataFingerprint()
    const started = performance.now()
    const res = await analyst.raw(`/api/sources/${sourceId}/releases`, { method: 'POST', body: uploadForm(file, entry.file, entry.mapping ?? manifest.mapping) })
    const text = await res.text()
    const elapsed = performance.now() - started
    const body = JSON.parse(text)
    expect(res.status, text.slice(0, 2000)).toBe(entry.status)
    expect(Buffer.byteLength(text), 'reply size').toBeLessThan(MAX_REPLY_BYTES)
    expect(elapsed, 'reply time (ms)').toBeLessThan(MAX_REPLY_MS)

    if (entry.accepted) {
      if (entry.warning) expect(body.warnings.join(' ')).toMatch(new RegExp(entry.warning))
      const job = await waitForJob(analyst, body.jobId)
      expect(job.state, JSON.stringify(job)).toBe('done')
      const rows = await sql(`SELECT j.code, o.period, o.value FROM observations o JOIN jurisdictions j ON j.id = o.jurisdiction_id
        WHERE o.release_id = $1 ORDER BY j.code, o.period`, [body.releaseId])
      expect(rows.map(r => [r.code, r.period, r.value])).toEqual(entry.accepted)
      return
    }
    expect(body.message).toMatch(new RegExp(entry.message!))
    expect(body.data.errors.length).toBeGreaterThan(0)
    expect(body.data.errors.length).toBeLessThanOrEqual(100)
    for (const e of body.data.errors) expect(e.column == null || e.column.length <= 60).toBe(true)
    if (entry.problemCount) expect(body.data.problemCount).toBe(entry.problemCount)
    if (entry.listed) expect(body.data.errors).toHaveLength(entry.listed)
    expect(await dataFingerprint()).toEqual(before)
  })
})

describe('reading happens off the request loop', () => {
  it('other requests are answered while a large file is read and checked', async () => {
    // 400,000 rows, each with a value that is not a number: the whole file must be read and every row checked.
    const lines = ['code,month,count']
    for (let i = 0; i < 400_000; i++) lines.push(`MF-A,2020-01,n${i}`)
    const big = `${lines.join('\n')}\n`
    const before = await dataFingerprint()
    const upload = uploadRelease(analyst, sourceId, big, 'slow.csv', manifest.mapping)
    const waits: number[] = []
    let done = false
    void upload.finally(() => { done = true })
    await new Promise(r => setTimeout(r, 300))
    while (!done) {
      const t = performance.now()
      const probe = await fetch(`${process.env.COUNTERPART_TEST_URL ?? 'http://127.0.0.1:3100'}/api/auth/csrf`)
      expect(probe.status).toBe(200)
      waits.push(performance.now() - t)
      await new Promise(r => setTimeout(r, 50))
    }
    const res = await upload
    expect(res.status).toBe(400)
    expect(res.body.data.problemCount).toBe(400_000)
    expect(res.body.data.errors).toHaveLength(100)
    expect(waits.length, 'probes made while the file was read').toBeGreaterThan(2)
    expect(Math.max(...waits), `probe times ${waits.map(w => Math.round(w)).join(', ')} ms`).toBeLessThan(1000)
    expect(await dataFingerprint()).toEqual(before)
  })
})
