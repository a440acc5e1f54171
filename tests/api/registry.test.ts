/**
 * The data registry over HTTP: jurisdictions (with symmetric neighbours), measures, sources,
 * policy events; who may write what; every change in the audit log.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { as, type Client } from '../support/http'
import { closePool, sql } from '../support/db'
import { runTag } from '../support/uploads'

let admin: Client
let analyst: Client
let reviewer: Client
const tag = runTag()
const code = (n: number) => `R${tag}-${n}`

beforeAll(async () => {
  ;[admin, analyst, reviewer] = await Promise.all([as('admin'), as('analyst'), as('reviewer')])
})
afterAll(closePool)

describe('jurisdictions', () => {
  it('an admin adds jurisdictions with attributes and neighbours, kept symmetric', async () => {
    const a = await admin.post('/api/jurisdictions', { code: code(1), name: 'Lowmere', kind: 'municipality', region: 'North', attributes: { population: 12000, coastal: true } })
    expect(a.status).toBe(201)
    expect(a.body).toMatchObject({ code: code(1), name: 'Lowmere', region: 'North', attributes: { population: 12000, coastal: true }, neighbours: [] })
    const b = await admin.post('/api/jurisdictions', { code: code(2), name: 'Highmere', kind: 'municipality', neighbours: [code(1)] })
    expect(b.status).toBe(201)
    expect(b.body.neighbours).toEqual([code(1)])
    const first = await reviewer.get(`/api/jurisdictions/${code(1)}`)
    expect(first.status).toBe(200)
    expect(first.body.neighbours).toEqual([code(2)])
    const list = await analyst.get('/api/jurisdictions')
    expect(list.body.map((j: { code: string }) => j.code)).toEqual(expect.arrayContaining([code(1), code(2)]))
    const logged = await sql(`SELECT action FROM audit_log WHERE entity = 'jurisdiction' AND entity_id = $1`, [code(2)])
    expect(logged.map(l => l.action)).toEqual(['create'])
  })

  it('refuses a duplicate code, an unknown neighbour and a bad code, with the reason', async () => {
    const dup = await admin.post('/api/jurisdictions', { code: code(1), name: 'Again', kind: 'municipality' })
    expect(dup.status).toBe(409)
    expect(dup.body.message).toContain('already exists')
    const unknown = await admin.post('/api/jurisdictions', { code: code(3), name: 'Nowhere', kind: 'municipality', neighbours: ['NO-SUCH'] })
    expect(unknown.status).toBe(400)
    expect(unknown.body.message).toContain('NO-SUCH')
    const bad = await admin.post('/api/jurisdictions', { code: 'has space', name: 'X', kind: 'municipality' })
    expect(bad.status).toBe(400)
    expect(bad.body.data.issues[0].path).toBe('code')
    const missing = await admin.get(`/api/jurisdictions/${code(99)}`)
    expect(missing.status).toBe(404)
  })

  it('an admin edits and deletes; the neighbour link goes both ways', async () => {
    await admin.post('/api/jurisdictions', { code: code(3), name: 'Midmere', kind: 'municipality' })
    const patched = await admin.patch(`/api/jurisdictions/${code(3)}`, { name: 'Middlemere', region: 'South', neighbours: [code(1), code(2)] })
    expect(patched.status).toBe(200)
    expect(patched.body).toMatchObject({ name: 'Middlemere', region: 'South', neighbours: [code(1), code(2)] })
    expect((await admin.get(`/api/jurisdictions/${code(1)}`)).body.neighbours).toEqual([code(2), code(3)])
    const del = await admin.delete(`/api/jurisdictions/${code(3)}`)
    expect(del.status).toBe(200)
    expect((await admin.get(`/api/jurisdictions/${code(1)}`)).body.neighbours).toEqual([code(2)])
    const logged = await sql(`SELECT action FROM audit_log WHERE entity = 'jurisdiction' AND entity_id = $1 ORDER BY id`, [code(3)])
    expect(logged.map(l => l.action)).toEqual(['create', 'update', 'delete'])
  })

  it('refuses to delete a jurisdiction that policy events refer to', async () => {
    const ev = await admin.post('/api/policy-events', { jurisdiction: code(2), period: '2019-7', kind: 'adoption', policy: `p${tag.toLowerCase()}`, label: 'Mediation before filing' })
    expect(ev.status).toBe(201)
    const del = await admin.delete(`/api/jurisdictions/${code(2)}`)
    expect(del.status).toBe(409)
    expect(del.body.message).toContain('1 policy event')
  })
})

describe('measures, sources and policy events', () => {
  const key = `m_${tag.toLowerCase()}`
  it('an admin adds a measure; a duplicate key is refused', async () => {
    const m = await admin.post('/api/measures', { key, label: 'Filings', unit: 'filings', kind: 'outcome', frequency: 'month' })
    expect(m.status).toBe(201)
    expect(m.body).toMatchObject({ key, kind: 'outcome', frequency: 'month' })
    expect((await admin.post('/api/measures', { key, label: 'Again', unit: 'x', kind: 'outcome', frequency: 'month' })).status).toBe(409)
    const bad = await admin.post('/api/measures', { key: 'Bad Key', label: 'x', unit: 'x', kind: 'rate', frequency: 'hourly' })
    expect(bad.status).toBe(400)
    expect((await reviewer.get('/api/measures')).body.some((x: { key: string }) => x.key === key)).toBe(true)
  })

  it('an admin adds a source with provenance; it lists and opens with its releases', async () => {
    const s = await admin.post('/api/sources', { name: `Housing courts ${tag}`, publisher: 'Court administration', url: 'https://example.org/data', licence: 'Open data licence' })
    expect(s.status).toBe(201)
    expect(s.body.id).toBeGreaterThan(0)
    const one = await analyst.get(`/api/sources/${s.body.id}`)
    expect(one.body).toMatchObject({ name: `Housing courts ${tag}`, publisher: 'Court administration', releases: [] })
    expect((await admin.post('/api/sources', { name: 'x', publisher: 'y', url: 'not a link' })).status).toBe(400)
    expect((await admin.get('/api/sources/999999')).status).toBe(404)
  })

  it('policy events keep the canonical period and filter by jurisdiction and policy', async () => {
    const policy = `p${tag.toLowerCase()}`
    const s = await admin.post('/api/policy-events', { jurisdiction: code(2), period: '2021-03', kind: 'strengthening', policy, label: 'Longer notice', notes: 'Notice from 14 to 30 days' })
    expect(s.status).toBe(201)
    const list = await reviewer.get(`/api/policy-events?policy=${policy}`)
    expect(list.body.map((e: { period: string, kind: string }) => [e.period, e.kind])).toEqual([['2019-07', 'adoption'], ['2021-03', 'strengthening']])
    expect((await reviewer.get(`/api/policy-events?jurisdiction=${code(1)}`)).body).toEqual([])
    const bad = await admin.post('/api/policy-events', { jurisdiction: 'NO-SUCH', period: 'someday', kind: 'adoption', policy, label: 'x' })
    expect(bad.status).toBe(400)
    expect(bad.body.data.issues[0]).toMatchObject({ path: 'period' })
    const unknown = await admin.post('/api/policy-events', { jurisdiction: 'NO-SUCH', period: '2020', kind: 'adoption', policy, label: 'x' })
    expect(unknown.status).toBe(400)
    expect(unknown.body.message).toContain('NO-SUCH')
  })
})

describe('roles', () => {
  it('an analyst cannot edit jurisdictions, sources, measures or policy events', async () => {
    const tries = await Promise.all([
      analyst.post('/api/jurisdictions', { code: code(7), name: 'X', kind: 'municipality' }),
      analyst.patch(`/api/jurisdictions/${code(1)}`, { name: 'Renamed' }),
      analyst.delete(`/api/jurisdictions/${code(1)}`),
      analyst.post('/api/sources', { name: 'x', publisher: 'y' }),
      analyst.post('/api/measures', { key: 'x_y', label: 'x', unit: 'x', kind: 'outcome', frequency: 'year' }),
      analyst.post('/api/policy-events', { jurisdiction: code(1), period: '2020', kind: 'adoption', policy: 'x', label: 'x' }),
    ])
    expect(tries.map(t => t.status)).toEqual([403, 403, 403, 403, 403, 403])
    expect((await admin.get(`/api/jurisdictions/${code(1)}`)).body.name).toBe('Lowmere')
  })

  it('a reviewer cannot edit anything either', async () => {
    const tries = await Promise.all([
      reviewer.post('/api/jurisdictions', { code: code(8), name: 'X', kind: 'municipality' }),
      reviewer.patch(`/api/jurisdictions/${code(1)}`, { name: 'Renamed' }),
      reviewer.post('/api/measures', { key: 'x_z', label: 'x', unit: 'x', kind: 'outcome', frequency: 'year' }),
    ])
    expect(tries.map(t => t.status)).toEqual([403, 403, 403])
    expect(tries[0]!.body.message).toContain('admin')
  })
})
