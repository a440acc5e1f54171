/**
 * Archiving registry entries over HTTP: an admin archives and brings back measures, sources
 * and jurisdictions (audited); lists hide archived entries unless asked; a new study cannot use
 * an archived measure or treated jurisdiction and is not offered an archived candidate, while a
 * study made before keeps it; other roles, bad input and repeats are refused with a message.
 * Then the studies list's filters (owner, status, outcome), applied on the server.
 * Invented registry entries and the invented study of tests/support/studyFixture.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { anonymous } from '../support/http'
import { closePool, sql } from '../support/db'
import { type StudyFixture, studyWithRuns } from '../support/studyFixture'

let f: StudyFixture

beforeAll(async () => {
  f = await studyWithRuns()
})
afterAll(closePool)

const codes = (rows: { code: string }[]) => rows.map(r => r.code)
const candidates = (rows: { jurisdiction: string }[]) => rows.map(r => r.jurisdiction)

describe('archiving', () => {
  it('refuses other roles, no session, bad input, unknown entries and repeats', async () => {
    const url = `/api/jurisdictions/${f.codes.excluded}/archive`
    expect((await anonymous().post(url, { archived: true })).status).toBe(401)
    expect((await f.analyst.post(url, { archived: true })).status).toBe(403)
    expect((await f.reviewer.post(url, { archived: true })).status).toBe(403)
    const bad = await f.admin.post(url, { archived: 'yes' })
    expect(bad.status).toBe(400)
    expect(bad.body.message).toContain('archived is true (archive it) or false (bring it back).')
    expect((await f.admin.post(url, { archived: true, extra: 1 })).status).toBe(400)
    const unknown = await f.admin.post('/api/measures/no_such_measure_zz/archive', { archived: true })
    expect(unknown.status).toBe(404)
    expect(unknown.body.message).toBe('No measure "no_such_measure_zz".')
    expect((await f.admin.post('/api/sources/999999999/archive', { archived: true })).status).toBe(404)
    const notArchived = await f.admin.post(url, { archived: false })
    expect(notArchived.status).toBe(409)
    expect(notArchived.body.message).toContain('is not archived')
    expect((await f.admin.get('/api/jurisdictions?archived=all')).status).toBe(400)
  })

  it('an archived jurisdiction leaves the lists and new studies but stays with the old study', async () => {
    const code = f.codes.comparison[1]!
    const before = await f.reviewer.get(`/api/studies/${f.studyId}/candidates`)
    expect(before.status).toBe(200)
    expect(candidates(before.body.rows)).toContain(code)

    const res = await f.admin.post(`/api/jurisdictions/${code}/archive`, { archived: true })
    expect(res.status).toBe(200)
    expect(res.body.archivedAt).toBeTruthy()
    expect((await f.admin.post(`/api/jurisdictions/${code}/archive`, { archived: true })).status).toBe(409)

    expect(codes((await f.analyst.get('/api/jurisdictions')).body)).not.toContain(code)
    const all = await f.analyst.get('/api/jurisdictions?archived=include')
    expect(all.body.find((j: { code: string }) => j.code === code)?.archivedAt).toBeTruthy()
    expect(codes((await f.analyst.get('/api/jurisdictions?archived=only')).body)).toContain(code)

    // the study made before the archiving keeps the candidate
    expect(candidates((await f.reviewer.get(`/api/studies/${f.studyId}/candidates`)).body.rows)).toContain(code)
    // a new study is not offered it, and cannot treat it
    const fresh = await f.analyst.post('/api/studies', { title: `After archiving ${f.tag}`, outcome: f.outcome, treated: [f.codes.treated], start: '2007' })
    expect(fresh.status).toBe(201)
    const offered = await f.analyst.get(`/api/studies/${fresh.body.id}/candidates`)
    expect(offered.status).toBe(200)
    expect(candidates(offered.body.rows)).not.toContain(code)
    expect(candidates(offered.body.rows)).toContain(f.codes.comparison[0])
    const treatArchived = await f.analyst.post('/api/studies', { title: `Treating archived ${f.tag}`, outcome: f.outcome, treated: [code], start: '2007' })
    expect(treatArchived.status).toBe(400)
    expect(treatArchived.body.message).toContain(`jurisdiction "${code}"`)
    expect(treatArchived.body.data.issues).toEqual([expect.objectContaining({ path: 'treated' })])

    const back = await f.admin.post(`/api/jurisdictions/${code}/archive`, { archived: false })
    expect(back.status).toBe(200)
    expect(back.body.archivedAt).toBeNull()
    expect(codes((await f.analyst.get('/api/jurisdictions')).body)).toContain(code)
    const log = await sql(`SELECT action, after FROM audit_log WHERE entity = 'jurisdiction' AND entity_id = $1 AND action IN ('archive', 'unarchive') ORDER BY id`, [code])
    expect(log.map(l => l.action)).toEqual(['archive', 'unarchive'])
    expect(log[1]!.after).toEqual({ archivedAt: null })
  })

  it('an archived measure cannot start a new study; an archived source leaves the list', async () => {
    expect((await f.admin.post(`/api/measures/${f.covariate}/archive`, { archived: true })).status).toBe(200)
    expect((await f.analyst.get('/api/measures')).body.map((m: { key: string }) => m.key)).not.toContain(f.covariate)
    const refused = await f.analyst.post('/api/studies', { title: `Archived covariate ${f.tag}`, outcome: f.outcome, treated: [f.codes.treated], start: '2007', covariates: [f.covariate] })
    expect(refused.status).toBe(400)
    expect(refused.body.message).toBe(`Archived, so not available to new studies: measure "${f.covariate}". An administrator can bring it back on the registry page.`)
    // the old study still reads and runs with it
    expect((await f.analyst.post(`/api/studies/${f.studyId}/runs`, { design: 'did' })).status).toBe(201)
    expect((await f.admin.post(`/api/measures/${f.covariate}/archive`, { archived: false })).status).toBe(200)

    const [source] = await sql(`SELECT id FROM sources WHERE name = $1`, [`Demo road statistics ${f.tag}`])
    expect((await f.admin.post(`/api/sources/${source!.id}/archive`, { archived: true })).status).toBe(200)
    const ids = (await f.analyst.get('/api/sources')).body.map((s: { id: number }) => s.id)
    expect(ids).not.toContain(source!.id)
    expect((await f.analyst.get(`/api/sources/${source!.id}`)).status).toBe(200)
    expect((await f.admin.post(`/api/sources/${source!.id}/archive`, { archived: false })).status).toBe(200)
    const log = await sql(`SELECT action FROM audit_log WHERE entity = 'source' AND entity_id = $1 AND action IN ('archive', 'unarchive') ORDER BY id`, [String(source!.id)])
    expect(log.map(l => l.action)).toEqual(['archive', 'unarchive'])
  })
})

describe('studies list filters', () => {
  it('filters by outcome, owner and status on the server', async () => {
    const ids = (rows: { id: number }[]) => rows.map(r => r.id)
    const byOutcome = await f.reviewer.get(`/api/studies?outcome=${f.outcome}`)
    expect(byOutcome.status).toBe(200)
    expect(byOutcome.body.length).toBeGreaterThanOrEqual(1)
    expect(byOutcome.body.every((s: { outcome: string }) => s.outcome === f.outcome)).toBe(true)
    expect(ids(byOutcome.body)).toContain(f.studyId)

    const [owner] = await sql(`SELECT owner_id FROM studies WHERE id = $1`, [f.studyId])
    const byOwner = await f.reviewer.get(`/api/studies?owner=${owner!.owner_id}&outcome=${f.outcome}`)
    expect(ids(byOwner.body)).toContain(f.studyId)
    expect(byOwner.body.every((s: { ownerId: number }) => s.ownerId === owner!.owner_id)).toBe(true)
    expect((await f.reviewer.get(`/api/studies?owner=999999999`)).body).toEqual([])

    const drafts = await f.reviewer.get(`/api/studies?status=draft&outcome=${f.outcome}`)
    expect(ids(drafts.body)).toContain(f.studyId)
    expect((await f.reviewer.get(`/api/studies?status=approved&outcome=${f.outcome}`)).body).toEqual([])

    const choices = await f.reviewer.get('/api/studies/filters')
    expect(choices.status).toBe(200)
    expect(choices.body.owners.map((o: { id: number }) => o.id)).toContain(owner!.owner_id)
    expect(choices.body.outcomes).toEqual(expect.arrayContaining([{ key: f.outcome, label: 'Road deaths' }]))
  })

  it('refuses bad filters with a message, and callers without a session', async () => {
    const owner = await f.reviewer.get('/api/studies?owner=someone')
    expect(owner.status).toBe(400)
    expect(owner.body.message).toContain('owner is a user id')
    const status = await f.reviewer.get('/api/studies?status=finished')
    expect(status.status).toBe(400)
    expect(status.body.message).toContain('status is one of')
    expect((await f.reviewer.get('/api/studies?outcome=Not A Key')).status).toBe(400)
    expect((await anonymous().get('/api/studies/filters')).status).toBe(401)
  })
})
