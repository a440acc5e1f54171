/** Helpers for upload tests: send a release, wait for its job, and fingerprint the data tables. */
import { expect } from 'vitest'
import type { Client, Reply } from './http'
import { sql } from './db'

/** A short prefix unique to this test run, for codes and keys that must not collide. */
export function runTag(): string {
  return `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 5)}`.toUpperCase()
}

export function uploadForm(file: Buffer | string, fileName: string, mapping: unknown, label?: string): FormData {
  const form = new FormData()
  form.append('file', new Blob([typeof file === 'string' ? Buffer.from(file) : new Uint8Array(file)]), fileName)
  form.append('mapping', typeof mapping === 'string' ? mapping : JSON.stringify(mapping))
  if (label) form.append('label', label)
  return form
}

export function uploadRelease(client: Client, sourceId: number, file: Buffer | string, fileName: string, mapping: unknown, label?: string): Promise<Reply> {
  return client.request('POST', `/api/sources/${sourceId}/releases`, uploadForm(file, fileName, mapping, label))
}

export async function waitForJob(client: Client, jobId: string, timeoutMs = 30_000) {
  const start = Date.now()
  for (;;) {
    const { status, body } = await client.get(`/api/jobs/${jobId}`)
    expect(status).toBe(200)
    if (body.state === 'done' || body.state === 'failed' || body.state === 'cancelled') return body
    if (Date.now() - start > timeoutMs) throw new Error(`job ${jobId} still ${body.state} after ${timeoutMs} ms`)
    await new Promise(r => setTimeout(r, 150))
  }
}

/** Uploads a release and waits until its import is done; its id. */
export async function importedRelease(client: Client, sourceId: number, file: Buffer | string, label: string, mapping: unknown): Promise<number> {
  const res = await uploadRelease(client, sourceId, file, `${label}.csv`, mapping, label)
  expect(res.status, JSON.stringify(res.body)).toBe(202)
  expect((await waitForJob(client, res.body.jobId)).state).toBe('done')
  return res.body.releaseId as number
}

/**
 * A monthly outcome measure `key`, the jurisdictions `codes` (region "Test") and a source for
 * them, created by `admin`; the source's id.
 */
export async function monthlyPanelRegistry(admin: Client, codes: string[], key: string, label: string, sourceName: string): Promise<number> {
  for (const code of codes) expect((await admin.post('/api/jurisdictions', { code, name: `Town ${code}`, kind: 'municipality', region: 'Test' })).status).toBe(201)
  expect((await admin.post('/api/measures', { key, label, unit: label.toLowerCase(), kind: 'outcome', frequency: 'month' })).status).toBe(201)
  const source = await admin.post('/api/sources', { name: sourceName, publisher: sourceName })
  expect(source.status, JSON.stringify(source.body)).toBe(201)
  return source.body.id as number
}

/** The 24 months of 2020 and 2021, as periods. */
export const MONTHS_2020_2021 = Array.from({ length: 24 }, (_, i) => `${2020 + Math.floor(i / 12)}-${String((i % 12) + 1).padStart(2, '0')}`)

/**
 * A small monthly panel set up through the API: the registry (monthlyPanelRegistry), a first
 * release of `file` imported, and `analyst`'s study of `treated` from 2021-01 on the measure.
 */
export async function monthlyPanelStudy(admin: Client, analyst: Client, p: { treated: string, donors: string[], key: string, label: string, sourceName: string, file: string, mapping: unknown }): Promise<{ sourceId: number, studyId: number }> {
  const sourceId = await monthlyPanelRegistry(admin, [p.treated, ...p.donors], p.key, p.label, p.sourceName)
  await importedRelease(analyst, sourceId, p.file, 'first', p.mapping)
  const study = await analyst.post('/api/studies', { title: `${p.label} ${p.sourceName}`, outcome: p.key, treated: [p.treated], start: '2021-01' })
  expect(study.status, JSON.stringify(study.body)).toBe(201)
  return { sourceId, studyId: study.body.id as number }
}

/** Row counts and a content hash of every table an upload may touch. */
export async function dataFingerprint() {
  const [row] = await sql(`SELECT
    (SELECT count(*) FROM source_releases)::int AS releases,
    (SELECT count(*) FROM observations)::int AS observations,
    (SELECT coalesce(sum(hashtext(release_id || ':' || measure_id || ':' || jurisdiction_id || ':' || period || ':' || value)::bigint), 0)::text FROM observations) AS observation_hash,
    (SELECT coalesce(sum(hashtext(release_id || ':' || measure_id || ':' || jurisdiction_id || ':' || period || ':' || value)::bigint), 0)::text FROM panel_cells) AS current_panel_hash,
    (SELECT count(*) FROM measures)::int AS measures,
    (SELECT count(*) FROM jurisdictions)::int AS jurisdictions,
    (SELECT count(*) FROM jobs)::int AS jobs,
    (SELECT count(*) FROM audit_log)::int AS audit`)
  return row
}
