/**
 * The Robustness step's routes against the running server and the real database: an analyst
 * starts the checks of a run, they run as background jobs with progress, and each result is
 * stored with its spec and the fingerprint of the rows it read; the numbers agree with the
 * engine run on the rows read back independently (tests/support/studies.ts). Cancel, and the
 * refusals: no session, a reviewer (reader without write access), bad input, unknown ids.
 */
import ExcelJS from 'exceljs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { estimate } from '../../server/engine'
import { fingerprintRows } from '../../server/services/studies/fingerprint'
import { anonymous } from '../support/http'
import { closePool, sql } from '../support/db'
import { readRowsBack } from '../support/studies'
import { type StudyFixture, studyWithRuns } from '../support/studyFixture'
import { demoStudyWithRun } from '../support/demoStudy'

let f: StudyFixture
let started: any[]
let finished: any[]
const base = () => `/api/studies/${f.studyId}/robustness`
const ended = (s: string) => ['done', 'failed', 'cancelled'].includes(s)

async function waitFor(ids: number[], ms = 90_000) {
  for (const start = Date.now(); Date.now() - start < ms;) {
    const list = await f.analyst.get(base())
    const rows = (list.body as any[]).filter(r => ids.includes(r.id))
    if (rows.length === ids.length && rows.every(r => ended(r.status))) return rows
    await new Promise(r => setTimeout(r, 250))
  }
  throw new Error(`robustness checks ${ids.join(', ')} did not end in ${ms / 1000} s`)
}

beforeAll(async () => {
  f = await studyWithRuns()
  const res = await f.analyst.post(base(), { runId: f.runs.did.id })
  expect(res.status, JSON.stringify(res.body)).toBe(202)
  started = res.body
  finished = await waitFor(started.map(r => r.id))
}, 120_000)
afterAll(closePool)

const byKind = (k: string) => finished.find(r => r.kind === k)

describe('robustness checks of a run', () => {
  it('queues one job per check, all four by default', async () => {
    expect(started.map(r => r.kind).sort()).toEqual(['leave_one_out', 'placebo_space', 'placebo_time', 'pools'])
    for (const r of started) {
      expect(r.runId).toBe(f.runs.did.id)
      expect(r.jobId).toMatch(/^[0-9a-f-]{36}$/)
      expect(['queued', 'running', 'done']).toContain(r.status)
    }
    expect(finished.map(r => `${r.kind}:${r.status}:${r.message}`).sort()).toEqual(['leave_one_out:done:Done', 'placebo_space:done:Done', 'placebo_time:done:Done', 'pools:done:Done'])
    for (const r of finished) expect(r.progress).toBe(1)
  })

  it('stores each result with its spec and the fingerprint of the rows it read', async () => {
    const rows = await readRowsBack(f.runs.did.id)
    for (const kind of ['placebo_time', 'placebo_space', 'leave_one_out']) {
      const r = byKind(kind)
      expect(r.spec.kind).toBe(kind)
      expect(r.spec.run).toEqual(f.runs.did.spec)
      expect(r.fingerprint, kind).toBe(fingerprintRows(rows, r.spec))
    }
    const [db] = await sql('SELECT fingerprint, status FROM robustness_runs WHERE id = $1', [byKind('pools').id])
    expect(db.status).toBe('done')
    expect(db.fingerprint).toMatch(/^[0-9a-f]{64}$/)
  })

  it('placebo in time: fake starts in the pre-period, the actual effect over the same matched window', async () => {
    const r = byKind('placebo_time').result
    expect(byKind('placebo_time').spec.minDistance).toBe(3)
    // data 2001-2012, start 2007: pre-period 2001-2006 (6 periods), fake start 2004 only
    expect(r.prePeriods).toBe(6)
    expect(r.fakes.map((x: any) => x.start)).toEqual(['2004'])
    expect(r.runEstimate).toBeCloseTo(f.runs.did.result.effect.estimate, 12)
    // every effect over 3 periods either side of its start: the actual one on 2004-2006 against 2007-2009,
    // the fake one on 2001-2003 against 2004-2006, each a fresh estimate on the rows read back
    expect(r.window).toBe(3)
    const rows = (await readRowsBack(f.runs.did.id)).map(x => ({ unit: x.jurisdiction, period: x.period, values: x.values }))
    const analytic = { ...f.runs.did.spec, inference: { ...f.runs.did.spec.inference, method: 'analytic' } }
    const windowed = (pre: [string, string], post: [string, string], start: string, data = rows) =>
      estimate({ rows: data }, { ...analytic, start, window: { pre, post } }).effect.estimate
    expect(r.actual.estimate).toBeCloseTo(windowed(['2004', '2006'], ['2007', '2009'], '2007'), 10)
    const preRows = rows.filter(x => Number(x.period) < 2007)
    expect(r.fakes[0].estimate).toBeCloseTo(windowed(['2001', '2003'], ['2004', '2006'], '2004', preRows), 10)
    expect(r.share).toBe(r.atLeastAsLarge / r.n)
  })

  it('leave one out: each estimate equals a fresh estimate on the pool without that donor', async () => {
    const rows = (await readRowsBack(f.runs.did.id)).map(x => ({ unit: x.jurisdiction, period: x.period, values: x.values }))
    const r = byKind('leave_one_out').result
    expect(r.rows.map((x: any) => x.unit).sort()).toEqual([...f.codes.comparison].sort())
    for (const x of r.rows) {
      const spec = { ...f.runs.did.spec, comparison: f.codes.comparison.filter(c => c !== x.unit), inference: { ...f.runs.did.spec.inference, method: 'analytic' } }
      expect(x.estimate).toBeCloseTo(estimate({ rows }, spec).effect.estimate, 10)
    }
    expect(r.mostInfluential.length).toBe(3)
  })

  it('placebo in space uses the run\'s placebos; the run\'s own pool reproduces the run', () => {
    const space = byKind('placebo_space').result
    expect(space.source).toBe(f.runs.did.result.inference.method === 'permutation' ? 'run' : 'estimated')
    expect(space.n).toBe(f.codes.comparison.length)
    const pools = byKind('pools').result.pools
    expect(pools.map((p: any) => p.name)).toEqual(['run', 'suggested', 'weighted', 'same_region'])
    expect(pools[0].estimate).toBeCloseTo(f.runs.did.result.effect.estimate, 10)
    expect(pools[2].design).toBe('synthetic')
    // the fixture's jurisdictions have no region: that pool is kept, empty, with its reason
    expect(pools[3].estimate).toBeNull()
    expect(pools[3].note).toMatch(/no region/)
  })

  it('cancels a check: the route sets it cancelled and it never becomes done', async () => {
    const [row] = await sql(`INSERT INTO robustness_runs (study_id, run_id, kind, spec, status) VALUES ($1, $2, 'leave_one_out', '{}'::jsonb, 'running') RETURNING id`, [f.studyId, f.runs.did.id])
    const res = await f.analyst.post(`${base()}/${row.id}/cancel`, {})
    expect(res.status).toBe(200)
    expect(res.body.status).toBe('cancelled')
    const again = await f.analyst.post(`${base()}/${row.id}/cancel`, {})
    expect(again.status).toBe(409)
    expect(again.body.message).toMatch(/already ended \(cancelled\)/)
    // a real job cancelled as soon as it is queued
    const start = await f.analyst.post(base(), { runId: f.runs.did.id, kinds: ['leave_one_out', 'pools'] })
    expect(start.status).toBe(202)
    const last = start.body.find((r: any) => r.kind === 'pools')
    const cancel = await f.analyst.post(`${base()}/${last.id}/cancel`, {})
    const [end] = await waitFor([last.id])
    if (cancel.status === 200) expect(end.status).toBe('cancelled')
    else expect(cancel.status).toBe(409)
    await waitFor(start.body.map((r: any) => r.id))
  })

  it('the run\'s report and workbook carry the finished checks', async () => {
    const report = await f.reviewer.get(`/api/studies/${f.studyId}/runs/${f.runs.did.id}/report`)
    expect(report.status).toBe(200)
    const kinds = new Set(report.body.robustness.map((c: any) => c.kind))
    expect([...kinds].sort()).toEqual(['leave_one_out', 'placebo_space', 'placebo_time', 'pools'])
    const res = await f.reviewer.raw(`/api/studies/${f.studyId}/runs/${f.runs.did.id}/workbook`)
    expect(res.status).toBe(200)
    const wb = new ExcelJS.Workbook()
    await wb.xlsx.load(await res.arrayBuffer())
    const values: unknown[][] = []
    wb.getWorksheet('Robustness')!.eachRow(r => void values.push((r.values as unknown[]).slice(1)))
    const full = values.find(v => v[0] === 'Leave one donor out' && v[1] === 'Every donor')
    expect(full![2]).toBe(byKind('leave_one_out').result.full)
    expect(values.some(v => v[1] === 'Finding' && v[0] === 'Placebo in time')).toBe(true)
    // the event-study run has no checks: its sheet says so
    const other = await f.reviewer.raw(`/api/studies/${f.studyId}/runs/${f.runs.event.id}/workbook`)
    const wb2 = new ExcelJS.Workbook()
    await wb2.xlsx.load(await other.arrayBuffer())
    expect(String(wb2.getWorksheet('Robustness')!.getRow(2).getCell(2).value)).toMatch(/No robustness check of this run has finished/)
  })

  it('without runId the newest run is checked', async () => {
    const res = await f.analyst.post(base(), { kinds: ['placebo_time'], options: { minDistance: 2 } })
    expect(res.status).toBe(202)
    expect(res.body[0].runId).toBe(f.runs.event.id)
    expect(res.body[0].spec.minDistance).toBe(2)
    const [end] = await waitFor([res.body[0].id])
    expect(end.status).toBe('done')
    // pre-period 2001-2006 with 2 kept on each side: fake starts 2003, 2004 and 2005
    expect(end.result.fakes.map((x: any) => x.start)).toEqual(['2003', '2004', '2005'])
  })

  it('a reviewer reads the record', async () => {
    const res = await f.reviewer.get(base())
    expect(res.status).toBe(200)
    expect(res.body.length).toBeGreaterThanOrEqual(4)
  })
})

describe('cancelling a running check', () => {
  it('stops a long check between units: the row and its job end cancelled, no result kept', async () => {
    // the seeded demo: a weighted-comparison run, whose placebo in time re-fits the weights at each of 37 fake starts
    const { studyId } = await demoStudyWithRun(f.analyst, `Cancel ${f.tag}`)
    const synthetic = await f.analyst.post(`/api/studies/${studyId}/runs`, { design: 'synthetic' })
    expect(synthetic.status, JSON.stringify(synthetic.body).slice(0, 300)).toBe(201)
    const url = `/api/studies/${studyId}/robustness`
    const start = await f.analyst.post(url, { runId: synthetic.body.id, kinds: ['placebo_time'] })
    expect(start.status).toBe(202)
    const id = start.body[0].id
    let seen: any
    for (const t0 = Date.now(); Date.now() - t0 < 30_000;) {
      seen = (await f.analyst.get(url)).body.find((r: any) => r.id === id)
      if (seen.status !== 'queued' && (seen.progress > 0 || seen.status !== 'running')) break
      await new Promise(r => setTimeout(r, 100))
    }
    expect(seen.status).toBe('running')
    const cancel = await f.analyst.post(`${url}/${id}/cancel`, {})
    expect(cancel.status).toBe(200)
    const stoppedAt = Date.now()
    for (;;) {
      const job = await f.analyst.get(`/api/jobs/${seen.jobId}`)
      if (job.body.state !== 'running' && job.body.state !== 'queued') {
        expect(job.body.message).toMatch(/cancelled/i)
        break
      }
      expect(Date.now() - stoppedAt).toBeLessThan(10_000)
      await new Promise(r => setTimeout(r, 100))
    }
    const [row] = await sql('SELECT status, result, progress FROM robustness_runs WHERE id = $1', [id])
    expect(row.status).toBe('cancelled')
    expect(row.result).toBeNull()
    expect(row.progress).toBeLessThan(1)
  }, 90_000)
})

describe('refusals', () => {
  it('no session: 401', async () => {
    expect((await anonymous().post(base(), {})).status).toBe(401)
    expect((await anonymous().get(base())).status).toBe(401)
    expect((await anonymous().post(`${base()}/${started[0].id}/cancel`, {})).status).toBe(401)
  })

  it('a reviewer cannot start or cancel: 403', async () => {
    expect((await f.reviewer.post(base(), {})).status).toBe(403)
    expect((await f.reviewer.post(`${base()}/${started[0].id}/cancel`, {})).status).toBe(403)
  })

  it('bad input: 400 with the problem named', async () => {
    const cases: [unknown, RegExp][] = [
      [{ kinds: ['nope'] }, /Each check is one of/],
      [{ kinds: [] }, /at least one check/],
      [{ kinds: ['pools', 'pools'] }, /listed once/],
      [{ options: { minDistance: 0 } }, /at least 1 period/],
      [{ runId: 'x' }, /runId/],
      [{ surprise: 1 }, /surprise/],
    ]
    for (const [body, message] of cases) {
      const res = await f.analyst.post(base(), body)
      expect(res.status, JSON.stringify(body)).toBe(400)
      expect(JSON.stringify(res.body), JSON.stringify(body)).toMatch(message)
    }
  })

  it('unknown run, unknown check, a study without runs', async () => {
    expect((await f.analyst.post(base(), { runId: 999999 })).status).toBe(404)
    expect((await f.analyst.post(`${base()}/999999/cancel`, {})).status).toBe(404)
    const other = await f.analyst.post('/api/studies', { title: `No runs ${f.tag}`, outcome: f.outcome, treated: [f.codes.treated], start: '2007' })
    expect(other.status).toBe(201)
    const res = await f.analyst.post(`/api/studies/${other.body.id}/robustness`, {})
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(/no estimate yet/)
  })
})
