/**
 * The job system against the real split: the server under test runs in the web role and never
 * runs jobs; worker processes (one from scripts/test.sh, one started here) take them off the
 * pg-boss queue. Covered: progress reported by a worker; cancel (who may, 409 once finished,
 * the audit entry, the job ends "cancelled"); a worker killed with SIGKILL mid-job (the job is
 * failed with a message within seconds, an import leaves no rows and the same file can be
 * uploaded again at once); two workers never run one job twice. Answers are known by
 * construction (the test-only 'test-sleep' job kind counts its own steps).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { as, anonymous, DEMO, type Client } from '../support/http'
import { closePool, sql, testPool } from '../support/db'
import { closeQueue, getOverSocket, jobRow, runnerPid, sendSleepJob, startWorker, userId, waitForRow, type StartedWorker } from '../support/jobs'
import { runTag, uploadRelease, waitForJob } from '../support/uploads'

let admin: Client
let analyst: Client
let reviewer: Client
let analystId: number
let adminId: number
let extra: StartedWorker | undefined
const finished = (r: { state: string }) => ['done', 'failed', 'cancelled'].includes(r.state)

beforeAll(async () => {
  ;[admin, analyst, reviewer] = await Promise.all([as('admin'), as('analyst'), as('reviewer')])
  analystId = await userId(DEMO.analyst)
  adminId = await userId(DEMO.admin)
  await sql('CREATE TABLE IF NOT EXISTS test_job_runs (job_id uuid NOT NULL, runner text NOT NULL, at timestamptz NOT NULL DEFAULT now())')
  extra = await startWorker()
}, 60_000)

afterAll(async () => {
  extra?.child.kill('SIGTERM')
  await sql('DROP TABLE IF EXISTS test_job_runs')
  await closeQueue()
  await closePool()
})

/** A new source, four new measures and a CSV of 60 x 600 x 4 = 144,000 values over the demo jurisdictions. */
async function bigImport() {
  const tag = runTag().toLowerCase()
  const measures = [1, 2, 3, 4].map(i => `load_${tag}_${i}`)
  for (const key of measures) {
    const res = await admin.post('/api/measures', { key, label: `Test load ${key}`, unit: 'count', kind: 'outcome', frequency: 'month' })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
  }
  const source = await admin.post('/api/sources', { name: `Big import ${tag}`, publisher: 'Test office' })
  const codes = (await sql<{ code: string }>('SELECT code FROM jurisdictions ORDER BY code LIMIT 60')).map(r => r.code)
  const lines = [`code,month,${measures.join(',')}`]
  for (const code of codes) {
    for (let m = 0; m < 600; m++) lines.push(`${code},${1950 + Math.floor(m / 12)}-${String(m % 12 + 1).padStart(2, '0')},${m},${m + 1},${m + 2},${m + 3}`)
  }
  const mapping = { layout: 'long', jurisdiction: 'code', period: 'month', values: Object.fromEntries(measures.map(k => [k, k])) }
  return { sourceId: source.body.id as number, csv: `${lines.join('\n')}\n`, mapping }
}

/** Uploads and waits until the import has checked the file and goes on to insert (progress 0.1 or more; progress writes are spaced, so 0.2 may not show before the insert). */
async function importUnderWay(file: Awaited<ReturnType<typeof bigImport>>) {
  const res = await uploadRelease(analyst, file.sourceId, file.csv, 'big.csv', file.mapping)
  expect(res.status, JSON.stringify(res.body)).toBe(202)
  const running = await waitForRow(res.body.jobId, r => finished(r) || (r.state === 'running' && r.progress >= 0.1), 60_000)
  expect(running.state, 'the import was still running when the test meant to stop it').toBe('running')
  return { jobId: res.body.jobId as string, releaseId: res.body.releaseId as number, running }
}

/**
 * Holds imports at their panel_cells update (a SHARE lock conflicts with the update's ROW
 * EXCLUSIVE lock) until the returned function is called, so a test's cancel or kill surely lands
 * before the import commits, however fast the import is.
 */
async function holdPanelCells(): Promise<() => Promise<void>> {
  const holder = await testPool().connect()
  await holder.query('BEGIN')
  await holder.query('LOCK TABLE panel_cells IN SHARE MODE')
  return async () => {
    await holder.query('COMMIT')
    holder.release()
  }
}

async function expectNothingKept(releaseId: number, problem: RegExp) {
  const [release] = await sql('SELECT status, errors FROM source_releases WHERE id = $1', [releaseId])
  expect(release.status).toBe('failed')
  expect(release.errors[0].problem).toMatch(problem)
  const [{ n }] = await sql('SELECT count(*)::int AS n FROM observations WHERE release_id = $1', [releaseId])
  expect(n).toBe(0)
}

describe('a worker runs the job', () => {
  it('picks it up, reports progress in steps and finishes; the web process never runs it', async () => {
    const id = await sendSleepJob(analystId, { steps: 8, stepMs: 250 })
    const seen = new Set<number>()
    for (;;) {
      const res = await analyst.get(`/api/jobs/${id}`)
      expect(res.status).toBe(200)
      if (res.body.state === 'running' && res.body.progress > 0 && res.body.progress < 1) seen.add(res.body.progress)
      if (finished(res.body)) {
        expect(res.body).toMatchObject({ state: 'done', progress: 1, message: 'Done', cancelRequested: false, result: { steps: 8 } })
        expect(res.body.result.runner).toMatch(/:\d+ worker$/)
        break
      }
      await new Promise(r => setTimeout(r, 60))
    }
    expect(seen.size, 'intermediate progress values seen by the reader').toBeGreaterThanOrEqual(2)
    expect((await jobRow(id)).runner).toMatch(/ worker$/)
  })

  it('the extra worker answers only its health check: no pages, no API', async () => {
    const health = await extra!.health()
    expect(health).toMatchObject({ role: 'worker', consumes: expect.arrayContaining(['import-release', 'test-sleep']) })
    expect(health.runner).toContain(`:${extra!.pid} worker`)
    for (const path of ['/', '/api/me', '/api/jobs/00000000-0000-0000-0000-000000000000', '/login']) {
      const res = await getOverSocket(extra!.socket, path)
      expect(res.status, path).toBe(404)
      expect(JSON.stringify(res.body), path).toMatch(/serves no pages/)
    }
  })
})

describe('cancel', () => {
  it('stops a running job at its next progress report; it ends cancelled, audited, and a second cancel is a 409', async () => {
    const id = await sendSleepJob(analystId, { steps: 400, stepMs: 50 })
    await waitForRow(id, r => r.state === 'running' && r.progress > 0)
    expect((await anonymous().post(`/api/jobs/${id}/cancel`)).status).toBe(401)
    expect((await reviewer.post(`/api/jobs/${id}/cancel`)).status).toBe(404)
    expect((await analyst.post('/api/jobs/not-a-uuid/cancel')).status).toBe(400)
    const asked = Date.now()
    const res = await analyst.post(`/api/jobs/${id}/cancel`)
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    expect(res.body).toMatchObject({ id, state: 'running', message: 'Cancelling…' })
    const done = await waitForRow(id, finished, 10_000)
    const took = Date.now() - asked
    expect(done.state).toBe('cancelled')
    expect(done.message).toMatch(/cancel/i)
    expect(done.progress).toBeLessThan(1)
    expect(took, 'ms from the cancel to the job ending').toBeLessThan(3_000)
    const again = await analyst.post(`/api/jobs/${id}/cancel`)
    expect(again.status).toBe(409)
    expect(again.body.message).toMatch(/already been cancelled/)
    const audit = await sql(`SELECT user_id, before, after FROM audit_log WHERE action = 'cancel' AND entity = 'job' AND entity_id = $1`, [id])
    expect(audit).toHaveLength(1)
    expect(audit[0]).toMatchObject({ user_id: analystId, before: { state: 'running' }, after: { state: 'running' } })
    expect((await analyst.get(`/api/jobs/${id}`)).body).toMatchObject({ state: 'cancelled', cancelRequested: true })
  })

  it('an admin cancels someone else\'s queued job at once; it never starts; a finished job is a 409', async () => {
    const queued = await sendSleepJob(analystId, { steps: 1, stepMs: 1 }, false)
    const res = await admin.post(`/api/jobs/${queued}/cancel`)
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    expect(res.body).toMatchObject({ state: 'cancelled', message: expect.stringMatching(/before it started/) })
    expect(await jobRow(queued)).toMatchObject({ state: 'cancelled', runner: null })

    const quick = await sendSleepJob(adminId, { steps: 1, stepMs: 1 })
    await waitForRow(quick, finished)
    const late = await admin.post(`/api/jobs/${quick}/cancel`)
    expect(late.status).toBe(409)
    expect(late.body.message).toMatch(/already finished/)
    expect((await analyst.post(`/api/jobs/${quick}/cancel`)).status).toBe(404)
  })
})

describe('cancel an import', () => {
  it('rolls the import back: cancelled, no rows, release failed, and the same file can be uploaded again', async () => {
    const file = await bigImport()
    const release = await holdPanelCells()
    let first: Awaited<ReturnType<typeof importUnderWay>>
    try {
      first = await importUnderWay(file)
      expect((await analyst.post(`/api/jobs/${first.jobId}/cancel`)).status).toBe(200)
      await new Promise(r => setTimeout(r, 2_500)) // the runner notices the request (heartbeat 2 s)
    }
    finally {
      await release()
    }
    const ended = await waitForRow(first.jobId, finished, 15_000)
    expect(ended.state).toBe('cancelled')
    await expectNothingKept(first.releaseId, /cancel/i)
    const again = await uploadRelease(analyst, file.sourceId, file.csv, 'big.csv', file.mapping)
    expect(again.status, JSON.stringify(again.body)).toBe(202)
    expect(await waitForRow(again.body.jobId, finished, 60_000)).toMatchObject({ state: 'done' })
  }, 120_000)
})

describe('two workers', () => {
  it('never run the same job twice, and both take jobs', async () => {
    const ids: string[] = []
    for (let i = 0; i < 16; i++) ids.push(await sendSleepJob(analystId, { steps: 2, stepMs: 150, record: true }))
    for (const id of ids) expect(await waitForRow(id, finished, 30_000)).toMatchObject({ state: 'done' })
    const runs = await sql<{ job_id: string, n: number, runners: string[] }>(
      'SELECT job_id, count(*)::int AS n, array_agg(runner) AS runners FROM test_job_runs WHERE job_id = ANY($1::uuid[]) GROUP BY job_id', [ids])
    expect(runs).toHaveLength(ids.length)
    for (const r of runs) expect(r.n, `job ${r.job_id} ran in ${r.runners.join(', ')}`).toBe(1)
    const runners = new Set(runs.flatMap(r => r.runners))
    expect(runners.size, [...runners].join(', ')).toBeGreaterThanOrEqual(2)
  }, 60_000)
})

describe('a worker killed mid-job', () => {
  it('the job is failed with a message within seconds', async () => {
    const id = await sendSleepJob(analystId, { steps: 600, stepMs: 50 })
    const running = await waitForRow(id, r => r.state === 'running' && r.progress > 0)
    process.kill(runnerPid(running.runner), 'SIGKILL')
    const killedAt = Date.now()
    const failed = await waitForRow(id, finished, 30_000)
    const took = Date.now() - killedAt
    expect(failed.state).toBe('failed')
    expect(failed.message).toMatch(/process running it ended/)
    // stale after 10 s without a heartbeat, swept every 3 s (server/services/jobs/sweep.ts)
    expect(took, 'ms from the kill to the job failing').toBeLessThan(16_000)
  }, 40_000)

  it('an import killed mid-way leaves no rows, its release is failed, and the same file goes in again at once', async () => {
    const file = await bigImport()
    const release = await holdPanelCells()
    let first: Awaited<ReturnType<typeof importUnderWay>>
    try {
      first = await importUnderWay(file)
      process.kill(runnerPid(first.running.runner), 'SIGKILL')
    }
    finally {
      await release()
    }
    expect(await waitForRow(first.jobId, finished, 30_000)).toMatchObject({ state: 'failed' })
    await expectNothingKept(first.releaseId, /stopped before it finished/)

    const again = await uploadRelease(analyst, file.sourceId, file.csv, 'big.csv', file.mapping)
    expect(again.status, JSON.stringify(again.body)).toBe(202)
    const job = await waitForJob(analyst, again.body.jobId, 90_000)
    expect(job).toMatchObject({ state: 'done', result: { rowCount: 144_000 } })
  }, 180_000)
})
