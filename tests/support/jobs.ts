/**
 * Helpers for the job-system tests: queue the test-only job kind straight into pg-boss (as
 * a route would after creating the row), read job rows, and start extra worker processes
 * (the built server in the worker role, as `npm run worker` does) that a test may kill.
 */
import { spawn, type ChildProcess } from 'node:child_process'
import { request } from 'node:http'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import PgBoss from 'pg-boss'
import { sql, TEST_DATABASE_URL } from './db'

export const TEST_SLEEP = 'test-sleep'
const ROOT = join(__dirname, '../..')

let boss: Promise<PgBoss> | undefined
function queue(): Promise<PgBoss> {
  boss ??= (async () => {
    const b = new PgBoss({ connectionString: TEST_DATABASE_URL, max: 2, supervise: false, schedule: false })
    b.on('error', () => {})
    await b.start()
    await b.createQueue(TEST_SLEEP)
    return b
  })()
  return boss
}

export async function closeQueue(): Promise<void> {
  const b = await boss
  boss = undefined
  await b?.stop({ graceful: false, wait: true })
}

export async function userId(email: string): Promise<number> {
  const [row] = await sql('SELECT id FROM users WHERE email = $1', [email])
  return row.id
}

/** Creates a queued test-sleep job owned by `owner`; sends it to the queue unless told not to. */
export async function sendSleepJob(owner: number, data: { steps: number, stepMs: number, record?: boolean }, send = true): Promise<string> {
  const [row] = await sql(`INSERT INTO jobs (kind, created_by, result, message) VALUES ($1, $2, '{}', 'Waiting to start') RETURNING id`, [TEST_SLEEP, owner])
  if (send) await (await queue()).send(TEST_SLEEP, { ...data, jobId: row.id }, { id: row.id, retryLimit: 0, expireInHours: 1 })
  return row.id
}

export interface JobRow { id: string, state: string, progress: number, message: string | null, result: any, runner: string | null, updated_at: Date }

export async function jobRow(id: string): Promise<JobRow> {
  const [row] = await sql<JobRow>('SELECT id, state, progress, message, result, runner, updated_at FROM jobs WHERE id = $1', [id])
  return row!
}

/** Polls the row until `until` holds; throws with the last row after `timeoutMs`. */
export async function waitForRow(id: string, until: (row: JobRow) => boolean, timeoutMs = 20_000): Promise<JobRow> {
  const start = Date.now()
  for (;;) {
    const row = await jobRow(id)
    if (until(row)) return row
    if (Date.now() - start > timeoutMs) throw new Error(`job ${id} did not get there in ${timeoutMs} ms: ${JSON.stringify(row)}`)
    await new Promise(r => setTimeout(r, 100))
  }
}

/** The process id in a runner name ("host:pid role"). */
export function runnerPid(runner: string | null): number {
  const pid = Number(runner?.match(/:(\d+) /)?.[1])
  if (!pid) throw new Error(`no process id in runner "${runner}"`)
  return pid
}

/** A GET over a worker's unix socket: status and parsed body. */
export function getOverSocket(socketPath: string, path: string): Promise<{ status: number, body: any }> {
  return new Promise((resolve, reject) => {
    const req = request({ socketPath, path, method: 'GET', headers: { accept: 'application/json' } }, (res) => {
      let text = ''
      res.on('data', (c) => { text += c })
      res.on('end', () => {
        let body: unknown = text
        try {
          body = JSON.parse(text)
        }
        catch { /* keep the text */ }
        resolve({ status: res.statusCode ?? 0, body })
      })
    })
    req.on('error', reject)
    req.end()
  })
}

async function health(socketPath: string): Promise<any> {
  const res = await getOverSocket(socketPath, '/_worker/health')
  if (res.status !== 200) throw new Error(`health ${res.status}`)
  return res.body
}

export interface StartedWorker { child: ChildProcess, socket: string, pid: number, health: () => Promise<any> }

/** Starts one more worker process on the test database and waits until it answers its health check. */
export async function startWorker(): Promise<StartedWorker> {
  const socket = join(tmpdir(), `counterpart-test-worker-${process.pid}-${Date.now().toString(36)}.sock`)
  const env = { ...process.env, COUNTERPART_ROLE: 'worker', COUNTERPART_TEST_JOBS: '1', NITRO_UNIX_SOCKET: socket, DATABASE_URL: TEST_DATABASE_URL, AUTH_ORIGIN: 'http://worker.invalid/api/auth' }
  delete env.PORT
  delete env.HOST
  const child = spawn(process.execPath, [join(ROOT, '.output/server/index.mjs')], { env, stdio: 'ignore' })
  const start = Date.now()
  for (;;) {
    try {
      await health(socket)
      break
    }
    catch (e) {
      if (child.exitCode !== null || Date.now() - start > 30_000) throw new Error(`the extra worker did not start: ${(e as Error).message}`)
      await new Promise(r => setTimeout(r, 200))
    }
  }
  return { child, socket, pid: child.pid!, health: () => health(socket) }
}
