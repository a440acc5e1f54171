/**
 * The load benchmark's own set-up, the same as scripts/test.sh on a database of its own:
 * this checkout's PostgreSQL cluster (COUNTERPART_PG_PORT), a fresh database counterpart_load
 * with migrations and the demo seed, the built app (built when .output is missing, or always
 * with COUNTERPART_LOAD_BUILD=1), one web process (role web) on 127.0.0.1:COUNTERPART_LOAD_PORT
 * (default 3190) and one worker process (scripts/worker.sh). stop() ends what it started.
 * COUNTERPART_LOAD_PROFILE=1 writes a CPU profile of the web process to .data/profiles.
 */
import { execFileSync, spawn, type ChildProcess } from 'node:child_process'
import { existsSync, mkdirSync, openSync, readFileSync } from 'node:fs'
import { join } from 'node:path'

export const ROOT = join(import.meta.dirname, '../..')
const DATA = join(ROOT, '.data')
export const LOAD_DB = 'counterpart_load'

export interface Stack { url: string, databaseUrl: string, web: ChildProcess, worker: ChildProcess, stop(): Promise<void> }

function sh(script: string, args: string[], env: NodeJS.ProcessEnv = process.env): string {
  return execFileSync('bash', [join(ROOT, script), ...args], { cwd: ROOT, env, encoding: 'utf8', stdio: ['ignore', 'pipe', 'inherit'] }).trim()
}

function run(cmd: string, args: string[], env: NodeJS.ProcessEnv) {
  execFileSync(cmd, args, { cwd: ROOT, env, stdio: ['ignore', 'ignore', 'inherit'] })
}

async function waitFor(what: string, ok: () => Promise<boolean>, child: ChildProcess, log: string) {
  for (let i = 0; i < 120; i++) {
    if (await ok().catch(() => false)) return
    if (child.exitCode !== null) break
    await new Promise(r => setTimeout(r, 500))
  }
  throw new Error(`${what} did not start; see ${log}:\n${readFileSync(log, 'utf8').slice(-2000)}`)
}

/** Resident memory of a process in MB (Linux /proc), or NaN when it is gone. */
export function rssMb(pid: number | undefined): number {
  try {
    const m = readFileSync(`/proc/${pid}/status`, 'utf8').match(/VmRSS:\s+(\d+) kB/)
    return m ? Number(m[1]) / 1024 : Number.NaN
  }
  catch {
    return Number.NaN
  }
}

/** CPU seconds (user + system) a process has used so far (Linux /proc), or NaN. */
export function cpuSeconds(pid: number | undefined): number {
  try {
    const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]!.split(' ')
    return (Number(fields[11]) + Number(fields[12])) / 100 // utime, stime in clock ticks (100 a second on Linux)
  }
  catch {
    return Number.NaN
  }
}

export async function startStack(): Promise<Stack> {
  const port = Number(process.env.COUNTERPART_LOAD_PORT ?? 3190)
  const url = `http://127.0.0.1:${port}`
  sh('scripts/pg.sh', ['start'])
  sh('scripts/pg.sh', ['recreate', LOAD_DB])
  const databaseUrl = sh('scripts/pg.sh', ['url', LOAD_DB])
  const env = { ...process.env, DATABASE_URL: databaseUrl }
  run('npx', ['tsx', 'scripts/migrate.ts'], env)
  run('npx', ['tsx', 'db/seed/index.ts'], env)
  if (process.env.COUNTERPART_LOAD_BUILD === '1' || !existsSync(join(ROOT, '.output/server/index.mjs'))) {
    console.log('building the app')
    run('npx', ['nuxt', 'build'], env)
  }
  mkdirSync(join(DATA, 'logs'), { recursive: true })
  mkdirSync(join(DATA, 'run'), { recursive: true })
  const webLog = join(DATA, 'logs/load-app.log')
  const workerLog = join(DATA, 'logs/load-worker.log')
  // COUNTERPART_LOAD_PROFILE=1: a CPU profile of the web process in .data/profiles (written when it stops)
  const profile = process.env.COUNTERPART_LOAD_PROFILE === '1' ? ['--cpu-prof', `--cpu-prof-dir=${join(DATA, 'profiles')}`] : []
  const web = spawn(process.execPath, [...profile, '.output/server/index.mjs'], {
    cwd: ROOT,
    detached: true,
    stdio: ['ignore', openSync(webLog, 'w'), openSync(webLog, 'a')],
    env: { ...env, COUNTERPART_ROLE: 'web', HOST: '127.0.0.1', PORT: String(port), NUXT_AUTH_SECRET: 'counterpart-load-benchmark-secret-of-48-characters', AUTH_ORIGIN: `${url}/api/auth`, PUBLIC_ORIGIN: url },
  })
  const socket = join(DATA, 'run/load-worker.sock')
  const worker = spawn('bash', ['scripts/worker.sh'], {
    cwd: ROOT,
    detached: true,
    stdio: ['ignore', openSync(workerLog, 'w'), openSync(workerLog, 'a')],
    env: { ...env, COUNTERPART_WORKER_SOCKET: socket },
  })
  const stop = async () => {
    for (const child of [web, worker]) {
      try {
        process.kill(-child.pid!, 'SIGTERM')
      }
      catch { /* already gone */ }
    }
    for (let i = 0; i < 50 && web.exitCode === null; i++) await new Promise(r => setTimeout(r, 100))
  }
  try {
    await waitFor('the web process', async () => (await fetch(`${url}/api/auth/csrf`)).ok, web, webLog)
    await waitFor('the worker', async () => existsSync(socket), worker, workerLog)
  }
  catch (e) {
    await stop()
    throw e
  }
  return { url, databaseUrl, web, worker, stop }
}

/** CPU seconds used so far by this checkout's PostgreSQL: the postmaster and every backend under it. */
export function postgresCpuSeconds(): number {
  try {
    const postmaster = Number(readFileSync(join(DATA, 'pg/data/postmaster.pid'), 'utf8').split('\n')[0])
    const children = execFileSync('pgrep', ['-P', String(postmaster)], { encoding: 'utf8' }).trim().split('\n').map(Number).filter(Boolean)
    return [postmaster, ...children].reduce((sum, pid) => sum + (cpuSeconds(pid) || 0), 0)
  }
  catch {
    return Number.NaN
  }
}

/** The node process under scripts/worker.sh (its only child). */
export function workerNodePid(worker: ChildProcess): number | undefined {
  try {
    const out = execFileSync('pgrep', ['-P', String(worker.pid)], { encoding: 'utf8' }).trim().split('\n')
    return Number(out[0]) || undefined
  }
  catch {
    return undefined
  }
}
