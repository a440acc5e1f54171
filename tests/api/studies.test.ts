/**
 * Studies over HTTP on the demo scenario (db/seed/demoScenario.ts): field-level refusals of
 * bad input, roles and ownership, candidate scores and automatic flags, pool decisions that
 * persist and are audit-logged, runs whose stored result equals the engine's result on the
 * rows read back from the database, and the did estimate for the first adopter recovering
 * the generator's true effect within its 95% interval.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { as, Client, DEMO_PASSWORD } from '../support/http'
import { closePool, sql } from '../support/db'
import { runTag } from '../support/uploads'
import { estimate } from '../../server/engine'
import { SUGGESTED_POOL_SIZE } from '../../shared/schemas/studies'
import { fingerprintRows } from '../../server/services/studies/fingerprint'
import { ADOPTED, FIRST_ADOPTER, LATER_ADOPTERS, OUTCOME, RELATED_ADOPTER, STRENGTHENED, TRUE_EFFECT, demoNeighbours } from '../../db/seed/demoScenario'
import { readRowsBack } from '../support/studies'

let admin: Client
let analyst: Client
let reviewer: Client
let otherAnalyst: Client
const tag = runTag()

const demoStudy = {
  title: `Mediation first, ${tag}`,
  question: 'Did mediation before filing lower eviction filings in the first adopter?',
  outcome: OUTCOME,
  treated: [FIRST_ADOPTER],
  start: ADOPTED,
  interventions: [
    { jurisdiction: FIRST_ADOPTER, period: ADOPTED, label: 'Mediation first adopted' },
    { jurisdiction: FIRST_ADOPTER, period: STRENGTHENED, label: 'Mediation strengthened' },
  ],
  // the post-period ends before the strengthening, so the adoption effect alone is estimated
  window: { pre: ['2012-01', '2017-06'], post: ['2017-07', '2019-12'] },
  covariates: ['unemployment_rate'],
}

beforeAll(async () => {
  ;[admin, analyst, reviewer] = await Promise.all([as('admin'), as('analyst'), as('reviewer')])
  const email = `analyst-${tag.toLowerCase()}@counterpart.test`
  expect((await admin.post('/api/users', { email, name: `Second analyst ${tag}`, role: 'analyst', password: DEMO_PASSWORD })).status).toBe(201)
  otherAnalyst = new Client()
  expect(await otherAnalyst.signIn(email)).toBeNull()
})
afterAll(closePool)

describe('creating a study', () => {
  it('bad input gives field-level errors', async () => {
    const res = await analyst.post('/api/studies', { title: '', outcome: 'Not A Key', treated: [], start: 'someday', transform: 'cube', extra: 1 })
    expect(res.status).toBe(400)
    const paths = res.body.data.issues.map((i: { path: string }) => i.path)
    expect(paths).toEqual(expect.arrayContaining(['title', 'outcome', 'treated', 'start', 'transform', '']))
    const missing = await analyst.post('/api/studies', { ...demoStudy, treated: ['NOWHERE-1'], start: { 'NOWHERE-1': ADOPTED }, covariates: ['no_such_measure'] })
    expect(missing.status).toBe(400)
    expect(missing.body.message).toContain('NOWHERE-1')
    expect(missing.body.message).toContain('no_such_measure')
    expect(missing.body.data.issues).toEqual(expect.arrayContaining([
      expect.objectContaining({ path: 'treated.0' }),
      expect.objectContaining({ path: 'covariates.0' }),
    ]))
    const cross = await analyst.post('/api/studies', { ...demoStudy, transform: 'rate', window: { pre: ['2017-01', '2012-01'], post: ['2011-01', '2012-01'] } })
    expect(cross.status).toBe(400)
    expect(cross.body.data.issues.map((i: { path: string }) => i.path)).toEqual(expect.arrayContaining(['denominator', 'window.pre']))
    const wrongFrequency = await analyst.post('/api/studies', { ...demoStudy, start: '2017' })
    expect(wrongFrequency.status).toBe(400)
    expect(wrongFrequency.body.data.issues[0]).toMatchObject({ path: 'start' })
  })

  it('a reviewer cannot create a study; signed-out callers are refused', async () => {
    expect((await reviewer.post('/api/studies', demoStudy)).status).toBe(403)
    expect((await new Client().get('/api/studies')).status).toBe(401)
  })
})

describe('the demo study', () => {
  let id: number

  beforeAll(async () => {
    const res = await analyst.post('/api/studies', demoStudy)
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    id = res.body.id
  })

  it('is listed and readable by everyone, editable only by its owner or an admin', async () => {
    const list = await reviewer.get('/api/studies')
    expect(list.status).toBe(200)
    expect(list.body.find((s: { id: number }) => s.id === id)).toMatchObject({ status: 'draft', outcome: OUTCOME, owner: expect.any(String) })
    const asReviewer = await reviewer.get(`/api/studies/${id}`)
    expect(asReviewer.body).toMatchObject({ id, canEdit: false, treated: [FIRST_ADOPTER] })
    expect((await analyst.get(`/api/studies/${id}`)).body.canEdit).toBe(true)
    expect((await reviewer.patch(`/api/studies/${id}`, { title: 'Changed by a reviewer' })).status).toBe(403)
    expect((await otherAnalyst.patch(`/api/studies/${id}`, { title: 'Changed by someone else' })).status).toBe(403)
    expect((await otherAnalyst.put(`/api/studies/${id}/pool`, { decisions: [{ jurisdiction: 'VM-LU-01', included: false }] })).status).toBe(403)
    expect((await reviewer.put(`/api/studies/${id}/pool`, { decisions: [{ jurisdiction: 'VM-LU-01', included: false }] })).status).toBe(403)
    expect((await reviewer.post(`/api/studies/${id}/runs`, { design: 'did' })).status).toBe(403)
    const patched = await analyst.patch(`/api/studies/${id}`, { question: 'Did mediation first lower filings?' })
    expect(patched.status).toBe(200)
    expect(patched.body.question).toBe('Did mediation first lower filings?')
    const bad = await analyst.patch(`/api/studies/${id}`, { treated: [] })
    expect(bad.status).toBe(400)
    expect(bad.body.data.issues[0].path).toBe('treated')
    const [row] = await sql(`SELECT count(*)::int AS n FROM audit_log WHERE entity = 'study' AND entity_id = $1 AND action = 'update'`, [String(id)])
    expect(row.n).toBe(1)
  })

  it('unknown studies are 404 for every route', async () => {
    for (const path of ['/api/studies/999999', '/api/studies/999999/candidates', '/api/studies/999999/trends', '/api/studies/999999/runs', '/api/studies/999999/runs/1']) {
      expect((await reviewer.get(path)).status, path).toBe(404)
    }
    expect((await analyst.post('/api/studies/999999/runs', { design: 'did' })).status).toBe(404)
    expect((await analyst.get(`/api/studies/${id}/runs/999999`)).status).toBe(404)
  })

  it('scores every candidate and flags related policies, neighbours and missing data', async () => {
    const res = await reviewer.get(`/api/studies/${id}/candidates`)
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    const rows = res.body.rows as { jurisdiction: string, rmspe: number, rank: number, exclusions: { reason: string }[], included: boolean, region: string, suggested: boolean, suggestedReason: string | null }[]
    expect(rows).toHaveLength(59)
    expect(rows.every(r => typeof r.rmspe === 'number' && r.region)).toBe(true)
    const reasons = (code: string) => rows.find(r => r.jurisdiction === code)!.exclusions.map(e => e.reason)
    expect(reasons(RELATED_ADOPTER)).toContain('related_policy')
    // a later adopter inside the window is contaminated too
    expect(reasons(LATER_ADOPTERS[0].code)).toContain('related_policy')
    const neighbours = demoNeighbours().filter(([a, b]) => a === FIRST_ADOPTER || b === FIRST_ADOPTER).map(([a, b]) => (a === FIRST_ADOPTER ? b : a))
    expect(neighbours.length).toBeGreaterThan(0)
    for (const n of neighbours) expect(reasons(n)).toContain('neighbour')
    // before any decision the pool is the suggested one: 10 unflagged units close in pre-period trend, each with its reason
    const suggested = rows.filter(r => r.suggested).map(r => r.jurisdiction)
    expect(suggested).toHaveLength(SUGGESTED_POOL_SIZE)
    expect(rows.filter(r => r.suggested).every(r => r.exclusions.length === 0 && /^tracks the treated unit's pre-period trend/.test(r.suggestedReason ?? ''))).toBe(true)
    expect(res.body.summary.suggested.sort()).toEqual([...suggested].sort())
    expect(rows.filter(r => r.included).map(r => r.jurisdiction).sort()).toEqual([...suggested].sort())
    expect(res.body.summary.poolSize).toBe(SUGGESTED_POOL_SIZE)
    expect(res.body.summary.balance[0]).toMatchObject({ measure: OUTCOME, treated: expect.any(Number), pool: expect.any(Number) })
  })

  it('pool decisions persist, need a reason to include a flagged unit, and are audit-logged', async () => {
    const noReason = await analyst.put(`/api/studies/${id}/pool`, { decisions: [{ jurisdiction: RELATED_ADOPTER, included: true }] })
    expect(noReason.status).toBe(400)
    expect(noReason.body.data.issues[0].path).toBe('decisions.0.reason')
    const treated = await analyst.put(`/api/studies/${id}/pool`, { decisions: [{ jurisdiction: FIRST_ADOPTER, included: true }] })
    expect(treated.status).toBe(400)
    const candidates = (await analyst.get(`/api/studies/${id}/candidates`)).body.rows as { jurisdiction: string, included: boolean }[]
    const donor = candidates.filter(r => r.included).at(-1)!.jurisdiction
    const started = Date.now()
    const res = await analyst.put(`/api/studies/${id}/pool`, { decisions: [{ jurisdiction: donor, included: false, reason: 'a one-off plant closure in 2016' }] })
    const ms = Date.now() - started
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    // the reply is re-scored and carries a quick did estimate on the new pool
    expect(res.body.preview).toMatchObject({ design: 'did', effect: { estimate: expect.any(Number) }, nClusters: SUGGESTED_POOL_SIZE, error: null })
    console.log(`pool change on the demo (save, re-score, re-estimate): ${ms} ms`)
    expect(ms).toBeLessThan(2000)
    expect(res.body.rows.find((r: { jurisdiction: string }) => r.jurisdiction === donor)).toMatchObject({ included: false, decided: true, reason: 'a one-off plant closure in 2016' })
    const again = await reviewer.get(`/api/studies/${id}/candidates`)
    expect(again.body.rows.find((r: { jurisdiction: string }) => r.jurisdiction === donor)).toMatchObject({ included: false, reason: 'a one-off plant closure in 2016' })
    const [stored] = await sql(`SELECT d.included, d.reason FROM study_pool_decisions d JOIN jurisdictions j ON j.id = d.jurisdiction_id WHERE d.study_id = $1 AND j.code = $2`, [id, donor])
    expect(stored).toEqual({ included: false, reason: 'a one-off plant closure in 2016' })
    const [log] = await sql(`SELECT after FROM audit_log WHERE entity = 'study' AND entity_id = $1 AND action = 'pool' ORDER BY id DESC LIMIT 1`, [String(id)])
    expect(log.after).toEqual([{ jurisdiction: donor, included: false, reason: 'a one-off plant closure in 2016' }])
    expect(again.body.summary.poolSize).toBe(res.body.summary.poolSize)
  })

  it('trends: levels, indexed, gap, donors, marks and the event study with its lead test', async () => {
    const started = Date.now()
    const res = await reviewer.get(`/api/studies/${id}/trends`)
    const ms = Date.now() - started
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    const t = res.body
    expect(t.periods[0]).toBe('2012-01')
    expect(t.periods.at(-1)).toBe('2019-12')
    expect(t.treated.levels).toHaveLength(t.periods.length)
    expect(t.pool.indexed).toHaveLength(t.periods.length)
    expect(t.gap).toHaveLength(t.periods.length)
    expect(t.donors.length).toBe(t.pool.codes.length)
    expect(t.marks.map((m: { period: string }) => m.period)).toContain(ADOPTED)
    expect(t.eventStudy.length).toBeGreaterThan(10)
    expect(t.leadTest.wald).toMatchObject({ p: expect.any(Number) })
    expect(t.leadTest.reading.length).toBeGreaterThan(0)
    expect(t.warnings.some((w: string) => /seasonality/i.test(w))).toBe(true)
    console.log(`trends on the demo: ${ms} ms`)
  })

  it('a did run recovers the true effect, and its result equals the engine on the rows read back', async () => {
    // The demo's regions follow different trends, so the analyst keeps the unflagged donors
    // of the treated unit's own region (every other candidate out, with the reason).
    const table = (await analyst.get(`/api/studies/${id}/candidates`)).body.rows as { jurisdiction: string, region: string, flagged: boolean }[]
    const region = (await sql('SELECT region FROM jurisdictions WHERE code = $1', [FIRST_ADOPTER]))[0].region
    const decisions = table.map(r => ({ jurisdiction: r.jurisdiction, included: !r.flagged && r.region === region, reason: r.region !== region ? 'another region, on another trend' : r.flagged ? 'flagged: a related policy, a shared border or missing data' : null }))
    expect(decisions.filter(d => d.included).length).toBeGreaterThanOrEqual(4)
    expect((await analyst.put(`/api/studies/${id}/pool`, { decisions })).status).toBe(200)
    const started = Date.now()
    const res = await analyst.post(`/api/studies/${id}/runs`, { design: 'did' })
    const ms = Date.now() - started
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    const run = res.body
    expect(run).toMatchObject({ id: expect.any(Number), fingerprint: expect.stringMatching(/^[0-9a-f]{64}$/), createdAt: expect.any(String), compare: null })
    // one treated unit and a handful of donors: placebo units by default, and too few of them
    // to bound a 95% interval, which the result says rather than pretending
    expect(run.result.inference).toMatchObject({ method: 'permutation', seed: null, enumerated: true })
    expect(run.spec.inference).toEqual({ method: 'auto', level: 0.95, draws: 9999, seed: 1 })
    const nPlacebos = run.result.inference.draws
    expect(nPlacebos).toBeLessThan(19)
    expect(run.result.effect.ciLow).toBeNull()
    expect(run.result.warnings.join(' ')).toContain(`smallest possible p-value is 1/${nPlacebos + 1}`)

    const rows = await readRowsBack(run.id)
    expect(rows.length).toBe(run.result.nObs)
    expect(fingerprintRows(rows, run.spec)).toBe(run.fingerprint)
    const engine = estimate({ rows: rows.map(r => ({ unit: r.jurisdiction, period: r.period, values: r.values })) }, run.spec)
    // the server adds one caution the engine cannot know (the study's later intervention); the numbers are the engine's
    const serverNote = (w: string) => w.startsWith('The treated period spans a later intervention')
    expect(run.result.warnings.some(serverNote)).toBe(true)
    // the placebo gap paths are stored apart and read back whole by the chart's request (a reviewer may read them)
    expect(run.result.inference.gaps.placebos).toEqual([])
    expect(run.result.inference.gaps.placeboUnits).toHaveLength(nPlacebos)
    const gaps = await reviewer.get(`/api/studies/${id}/runs/${run.id}/gaps`)
    expect(gaps.status).toBe(200)
    const whole = { ...run.result, inference: { ...run.result.inference, gaps: gaps.body } }
    expect({ ...whole, warnings: whole.warnings.filter((w: string) => !serverNote(w)) }).toEqual(JSON.parse(JSON.stringify(engine)))
    const [size] = await sql<{ result: number, paths: number }>('SELECT pg_column_size(result) AS result, octet_length(gap_paths) AS paths FROM study_runs WHERE id = $1', [run.id])
    expect(size!.paths).toBe(nPlacebos * run.result.inference.gaps.periods.length * 8)

    const [stored] = await sql('SELECT design, fingerprint, release_ids, spec FROM study_runs WHERE id = $1', [run.id])
    expect(stored).toMatchObject({ design: 'did', fingerprint: run.fingerprint, spec: run.spec })
    expect(stored.release_ids.length).toBeGreaterThan(0)
    expect(run.spec.comparison).not.toContain(RELATED_ADOPTER)

    const again = await analyst.post(`/api/studies/${id}/runs`, { design: 'did' })
    expect(again.body.fingerprint).toBe(run.fingerprint)
    expect(again.body.compare).toMatchObject({ previousId: run.id, estimateDelta: 0, dataChanged: false })
    expect(again.body.result).toEqual(run.result)
    const modelBased = await analyst.post(`/api/studies/${id}/runs`, { design: 'did', options: { inference: { method: 'analytic' } } })
    const effect = modelBased.body.result.effect
    console.log(`did on the demo: ${effect.estimate.toFixed(3)} [${effect.ciLow.toFixed(3)}, ${effect.ciHigh.toFixed(3)}] (model-based), true ${TRUE_EFFECT.adoption}; ${ms} ms`)
    expect(effect.ciLow).toBeLessThan(TRUE_EFFECT.adoption)
    expect(effect.ciHigh).toBeGreaterThan(TRUE_EFFECT.adoption)
    const list = await reviewer.get(`/api/studies/${id}/runs`)
    expect(list.body.map((r: { id: number }) => r.id)).toEqual([modelBased.body.id, again.body.id, run.id])
    expect((await reviewer.get(`/api/studies/${id}/runs/${run.id}`)).body.result).toEqual(run.result)
  })

  it('gap paths: refused signed out, for a malformed or unknown run, a run of another study, and a run without them', async () => {
    const did = (await analyst.post(`/api/studies/${id}/runs`, { design: 'did' })).body
    const its = (await analyst.post(`/api/studies/${id}/runs`, { design: 'its' })).body
    expect((await new Client().get(`/api/studies/${id}/runs/${did.id}/gaps`)).status).toBe(401)
    expect((await analyst.get(`/api/studies/${id}/runs/x/gaps`)).status).toBe(400)
    expect((await analyst.get(`/api/studies/${id}/runs/999999999/gaps`)).status).toBe(404)
    const other = (await analyst.post('/api/studies', { title: `Other ${tag}`, question: 'Another question about filings?', outcome: OUTCOME, treated: [FIRST_ADOPTER], start: ADOPTED })).body
    expect((await analyst.get(`/api/studies/${other.id}/runs/${did.id}/gaps`)).status).toBe(404)
    const none = await analyst.get(`/api/studies/${id}/runs/${its.id}/gaps`)
    expect(none.status).toBe(404)
    expect(none.body.message).toMatch(/has no gap paths/)
    expect((await analyst.get(`/api/studies/${id}/runs/${did.id}/gaps`)).body.placebos).toHaveLength(did.result.inference.gaps.placeboUnits.length)
  })

  it('every design runs; engine refusals come back as 400 with the engine\'s words', async () => {
    for (const design of ['event_study', 'its', 'pre_post', 'synthetic']) {
      const res = await analyst.post(`/api/studies/${id}/runs`, { design })
      expect(res.status, `${design}: ${JSON.stringify(res.body)}`).toBe(201)
      expect(res.body.result.design).toBe(design)
      expect(res.body.result.inference.reason.length).toBeGreaterThan(20)
    }
    const cits = await analyst.post(`/api/studies/${id}/runs`, { design: 'its', options: { its: { comparison: 'mean' }, interventions: 'first' } })
    expect(cits.status, JSON.stringify(cits.body)).toBe(201)
    expect(cits.body.result.comparison.kind).toBe('mean')
    expect(cits.body.result.inference.method).toBe('permutation')
    // an inference method that cannot run, or too many draws: 400 naming the problem and the alternative
    const single = await analyst.post(`/api/studies/${id}/runs`, { design: 'its', options: { inference: { method: 'permutation' } } })
    expect(single.status).toBe(400)
    expect(single.body.message).toMatch(/cannot run: a single series has no comparison units.*use "analytic"/)
    const many = await analyst.post(`/api/studies/${id}/runs`, { design: 'did', options: { inference: { draws: 10_000_000 } } })
    expect(many.status).toBe(400)
    expect(JSON.stringify(many.body)).toMatch(/at most 100,000/)
    const weighted = await analyst.post(`/api/studies/${id}/runs`, { design: 'synthetic', options: { inference: { method: 'analytic' } } })
    expect(weighted.status).toBe(400)
    expect(weighted.body.message).toMatch(/use "permutation"/)
    const bad = await analyst.post(`/api/studies/${id}/runs`, { design: 'event_study', options: { eventWindow: { from: -3, to: 3, reference: -9 } } })
    expect(bad.status).toBe(400)
    const unknown = await analyst.post(`/api/studies/${id}/runs`, { design: 'did', options: { treated: ['X'] } })
    expect(unknown.status).toBe(400)
    expect(unknown.body.message).toContain('treated')
  })

  it('an admin may change any study; an approved study refuses every change with 409', async () => {
    const renamed = await admin.patch(`/api/studies/${id}`, { title: `${demoStudy.title} (admin)` })
    expect(renamed.status).toBe(200)
    await sql(`UPDATE studies SET status = 'approved' WHERE id = $1`, [id])
    try {
      expect((await analyst.patch(`/api/studies/${id}`, { title: 'after approval' })).status).toBe(409)
      expect((await analyst.put(`/api/studies/${id}/pool`, { decisions: [{ jurisdiction: 'VM-LU-01', included: false }] })).status).toBe(409)
      expect((await admin.post(`/api/studies/${id}/runs`, { design: 'did' })).status).toBe(409)
      expect((await analyst.get(`/api/studies/${id}`)).body).toMatchObject({ locked: true, canEdit: false })
      expect((await reviewer.get(`/api/studies/${id}/runs`)).status).toBe(200)
    }
    finally {
      await sql(`UPDATE studies SET status = 'draft' WHERE id = $1`, [id])
    }
  })
})

describe('counts with their denominator as exposure', () => {
  it('a rate study runs its interrupted time series as a count model with rate ratios; a level study is refused with the way out', async () => {
    const created = await analyst.post('/api/studies', {
      title: `Filings as counts, ${tag}`, outcome: 'eviction_filings', transform: 'rate', denominator: 'renter_households', treated: [FIRST_ADOPTER], start: ADOPTED,
    })
    expect(created.status, JSON.stringify(created.body)).toBe(201)
    const res = await analyst.post(`/api/studies/${created.body.id}/runs`, { design: 'its', options: { its: { family: 'quasipoisson', comparison: 'none' } } })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    const r = res.body.result
    expect(res.body.spec).toMatchObject({ outcome: 'count', its: { family: 'quasipoisson', exposure: 'exposure' } })
    expect(r.countFit.dispersion).toBeGreaterThan(0)
    expect(r.inference.method).toBe('analytic')
    // the demo's first change is -0.8 per 1,000 on a rate of about 5: a rate ratio clearly below 1
    expect(r.coefficients.level_1?.rateRatio ?? r.coefficients.level.rateRatio).toBeLessThan(1)
    const levelStudy = await analyst.post('/api/studies', { title: `Filings as a level, ${tag}`, outcome: OUTCOME, treated: [FIRST_ADOPTER], start: ADOPTED })
    const refused = await analyst.post(`/api/studies/${levelStudy.body.id}/runs`, { design: 'its', options: { its: { family: 'poisson', comparison: 'none' } } })
    expect(refused.status).toBe(400)
    expect(refused.body.message).toMatch(/count model needs the outcome recorded as a count with a denominator/)
  })
})
