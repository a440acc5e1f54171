/**
 * `npm run bench:load`: 50 concurrent signed-in users on loopback for 30 s each phase, a mix
 * of study reads, candidate tables, pool changes, difference-in-differences runs and panel
 * reads (bench/load/users.ts), against the production build split as in production: one web
 * process and one worker. Three phases: plain; while a 300,000-row import runs in the worker;
 * while a robustness job runs (skipped, and said so, where POST /api/studies/:id/robustness
 * does not exist). Prints req/s, p50/p95/p99 (overall and per request kind), errors, and the
 * RSS of the web and worker processes. Goal (DESIGN.md, "Quality bars"): p95 under 500 ms
 * with zero errors in every phase; exit status 1 if a phase misses it.
 *
 * Starts everything itself on a database of its own (bench/load/stack.ts); export this
 * checkout's ports first (COUNTERPART_PG_PORT; COUNTERPART_LOAD_PORT, default 3190).
 * COUNTERPART_LOAD_USERS and COUNTERPART_LOAD_SECONDS change the size; COUNTERPART_LOAD_PHASES=plain
 * runs the first phase only (with COUNTERPART_LOAD_PROFILE=1, to profile one request mix);
 * COUNTERPART_LOAD_PHASES=actions runs each kind of request alone for 10 s instead (its cost;
 * COUNTERPART_LOAD_ACTIONS=did,pool picks some).
 */
import { cpus, loadavg, setPriority } from 'node:os'
import pg from 'pg'
import { cpuSeconds, postgresCpuSeconds, rssMb, startStack, workerNodePid, type Stack } from './load/stack'
import { act, makeAccounts, MIX, pickAction, prepareUser, Session, type Action, type LoadUser } from './load/users'
import { uniforms } from './uniforms'

const USERS = Number(process.env.COUNTERPART_LOAD_USERS ?? 50)
const SECONDS = Number(process.env.COUNTERPART_LOAD_SECONDS ?? 30)
const P95_GOAL_MS = 500
const IMPORT_ROWS = 300_000

interface Sample { action: Action, ms: number, ok: boolean }

function quantile(sorted: number[], q: number): number {
  if (!sorted.length) return Number.NaN
  return sorted[Math.min(sorted.length - 1, Math.ceil(q * sorted.length) - 1)]!
}

async function phase(name: string, stack: Stack, users: LoadUser[], only?: Action, seconds = SECONDS) {
  const samples: Sample[] = []
  const errors = new Map<string, number>()
  const rss = { web: 0, worker: 0 }
  const workerPid = workerNodePid(stack.worker)
  const meter = setInterval(() => {
    rss.web = Math.max(rss.web, rssMb(stack.web.pid) || 0)
    rss.worker = Math.max(rss.worker, rssMb(workerPid) || 0)
  }, 500)
  const cpu0 = { web: cpuSeconds(stack.web.pid), worker: cpuSeconds(workerPid), db: postgresCpuSeconds(), client: process.cpuUsage() }
  const end = Date.now() + seconds * 1000
  const t0 = performance.now()
  await Promise.all(users.map(async (user, i) => {
    const r = uniforms(1000 * (i + 1) + name.length)
    while (Date.now() < end) {
      const action = only ?? pickAction(r())
      const start = performance.now()
      let ok = false
      try {
        const res = await act(user, action, r)
        ok = res.status < 400
        if (!ok) errors.set(`${action} ${res.status} ${String(res.body?.message ?? '').slice(0, 80)}`, (errors.get(`${action} ${res.status} ${String(res.body?.message ?? '').slice(0, 80)}`) ?? 0) + 1)
      }
      catch (e) {
        errors.set(`${action} ${(e as Error).message.slice(0, 80)}`, (errors.get(`${action} ${(e as Error).message.slice(0, 80)}`) ?? 0) + 1)
      }
      samples.push({ action, ms: performance.now() - start, ok })
    }
  }))
  const wall = (performance.now() - t0) / 1000
  clearInterval(meter)
  const clientUsage = process.cpuUsage(cpu0.client)
  const cpu = { web: cpuSeconds(stack.web.pid) - cpu0.web, worker: cpuSeconds(workerPid) - cpu0.worker, db: postgresCpuSeconds() - cpu0.db, client: (clientUsage.user + clientUsage.system) / 1e6 }
  const all = samples.map(s => s.ms).sort((a, b) => a - b)
  const failed = samples.filter(s => !s.ok).length
  const line = (label: string, xs: number[]) => `  ${label.padEnd(11)} ${String(xs.length).padStart(6)} req  p50 ${quantile(xs, 0.5).toFixed(0).padStart(5)} ms  p95 ${quantile(xs, 0.95).toFixed(0).padStart(5)} ms  p99 ${quantile(xs, 0.99).toFixed(0).padStart(5)} ms`
  console.log(`\n${name}: ${(samples.length / wall).toFixed(1)} req/s over ${wall.toFixed(1)} s, ${USERS} users, errors ${failed}`)
  console.log(line('all', all))
  for (const [action] of MIX) if (!only || only === action) console.log(line(action, samples.filter(s => s.action === action).map(s => s.ms).sort((a, b) => a - b)))
  console.log(`  RSS (max)   web ${rss.web.toFixed(0)} MB, worker ${rss.worker.toFixed(0)} MB`)
  // CPU per request is what a busy machine changes least: it says what each request costs the web process
  console.log(`  CPU         web ${cpu.web.toFixed(1)} s (${(1000 * cpu.web / samples.length).toFixed(1)} ms a request, ${(100 * cpu.web / wall).toFixed(0)}% of a core), worker ${cpu.worker.toFixed(1)} s; load average ${loadavg()[0]!.toFixed(1)} on ${cpus().length} cores`)
  // where else the machine's cores went: the database (backends included) and this benchmark's own users
  console.log(`              PostgreSQL ${cpu.db.toFixed(1)} s (${(1000 * cpu.db / samples.length).toFixed(1)} ms a request), the benchmark's client ${cpu.client.toFixed(1)} s`)
  for (const [what, n] of errors) console.log(`  error x${n}: ${what}`)
  return { name, p95: quantile(all, 0.95), failed }
}

/** A CSV of IMPORT_ROWS rows (300 jurisdictions x 1,000 months, one new measure). */
async function prepareImport(stack: Stack) {
  const db = new pg.Client({ connectionString: stack.databaseUrl })
  await db.connect()
  const codes = (await db.query<{ code: string }>('SELECT code FROM jurisdictions ORDER BY code')).rows.map(r => r.code)
  const extra = Array.from({ length: 300 - codes.length }, (_, i) => `LOAD-${String(i + 1).padStart(3, '0')}`)
  await db.query(`INSERT INTO jurisdictions (code, name, kind) SELECT c, 'Load town ' || c, 'municipality' FROM unnest($1::text[]) AS c ON CONFLICT DO NOTHING`, [extra])
  await db.end()
  const all = [...codes, ...extra].slice(0, 300)
  const parts = ['code,month,load_series\n']
  for (const code of all) {
    let chunk = ''
    for (let t = 0; t < IMPORT_ROWS / all.length; t++) chunk += `${code},${1900 + Math.floor(t / 12)}-${String(t % 12 + 1).padStart(2, '0')},${(t % 97) + code.length}\n`
    parts.push(chunk)
  }
  return parts.join('')
}

async function startImport(stack: Stack, admin: Session, csv: string) {
  ok(await admin.send('POST', '/api/measures', { key: 'load_series', label: 'Load series', unit: 'count', kind: 'outcome', frequency: 'month' }), 'measure')
  const source = ok(await admin.send('POST', '/api/sources', { name: 'Load benchmark source', publisher: 'Benchmark office' }), 'source')
  const form = new FormData()
  form.append('file', new Blob([Buffer.from(csv)]), 'load.csv')
  form.append('mapping', JSON.stringify({ layout: 'long', jurisdiction: 'code', period: 'month', values: { load_series: 'load_series' } }))
  const res = await fetch(`${stack.url}/api/sources/${source.id}/releases`, { method: 'POST', body: form, headers: { cookie: admin.cookieHeader() } })
  const body = await res.json() as { jobId: string }
  if (res.status !== 202) throw new Error(`upload: ${res.status} ${JSON.stringify(body).slice(0, 300)}`)
  return body.jobId
}

function ok(res: { status: number, body: any }, what: string) {
  if (res.status >= 400) throw new Error(`${what}: ${res.status} ${JSON.stringify(res.body).slice(0, 300)}`)
  return res.body
}

async function jobState(session: Session, id: string) {
  return (await session.send('GET', `/api/jobs/${id}`)).body as { state: string, progress: number, updatedAt: string, createdAt: string }
}

async function main() {
  console.log(`starting the web process and a worker on a fresh database`)
  const stack = await startStack()
  // the simulated users yield the cores to the server (real users are on other machines)
  if (process.env.COUNTERPART_LOAD_CLIENT_NICE !== '0') setPriority(10)
  try {
    const emails = await makeAccounts(stack.databaseUrl, USERS)
    const users: LoadUser[] = []
    for (let i = 0; i < emails.length; i += 10) users.push(...await Promise.all(emails.slice(i, i + 10).map((e, k) => prepareUser(stack.url, e, i + k))))
    const admin = new Session(stack.url, '10.77.1.1')
    await admin.signIn('admin@counterpart.test', 'counterpart-demo')
    console.log(`${users.length} users signed in, each with a study of ${users[0]!.codes.length} candidates`)
    for (const u of users.slice(0, 5)) await act(u, 'did', Math.random) // warm-up

    const results = process.env.COUNTERPART_LOAD_PHASES === 'actions' ? [] : [await phase('plain', stack, users)]
    if (process.env.COUNTERPART_LOAD_PHASES === 'plain') return report(results)
    if (process.env.COUNTERPART_LOAD_PHASES === 'actions') {
      // each kind of request alone for 10 s: what one request of that kind costs
      const chosen = process.env.COUNTERPART_LOAD_ACTIONS?.split(',')
      for (const [action] of MIX) if (!chosen || chosen.includes(action)) results.push(await phase(`${action} alone`, stack, users, action, 10))
      return report(results)
    }

    const csv = await prepareImport(stack)
    const uploadAt = performance.now()
    const jobId = await startImport(stack, admin, csv)
    console.log(`\nthe ${(csv.length / 1e6).toFixed(1)} MB upload was answered in ${((performance.now() - uploadAt) / 1000).toFixed(1)} s (the web process reads and checks the file before queueing its import)`)
    const started = Date.now()
    results.push(await phase(`while a ${IMPORT_ROWS.toLocaleString('en')}-row import runs`, stack, users))
    let job = await jobState(admin, jobId)
    while (job.state === 'queued' || job.state === 'running') {
      await new Promise(r => setTimeout(r, 500))
      job = await jobState(admin, jobId)
    }
    console.log(`  the import ended ${job.state} ${((Date.parse(job.updatedAt) - started) / 1000).toFixed(1)} s after its upload`)

    const probe = await users[0]!.session.send('POST', `/api/studies/${users[0]!.studyId}/robustness`, {})
    if (probe.status === 404) console.log('\nrobustness job: not available')
    else {
      if (probe.status >= 400) throw new Error(`robustness: ${probe.status} ${JSON.stringify(probe.body).slice(0, 300)}`)
      results.push(await phase('while a robustness job runs', stack, users))
      const checks = (Array.isArray(probe.body) ? probe.body : []) as { kind?: string, jobId?: string | null }[]
      const states = await Promise.all(checks.map(async c => `${c.kind ?? 'check'} ${c.jobId ? (await jobState(users[0]!.session, c.jobId)).state : 'unknown'}`))
      console.log(`  the robustness checks at the end of the phase: ${states.join(', ') || 'none listed'}`)
    }

    return report(results)
  }
  finally {
    await stack.stop()
  }
}

/** The goal per phase; 1 when one missed it. */
function report(results: { name: string, p95: number, failed: number }[]): number {
  console.log(`\ngoal: p95 < ${P95_GOAL_MS} ms with zero errors in every phase`)
  let missed = false
  for (const r of results) {
    const met = r.p95 < P95_GOAL_MS && r.failed === 0
    missed ||= !met
    console.log(`  ${met ? 'met   ' : 'MISSED'} ${r.name}: p95 ${r.p95.toFixed(0)} ms, ${r.failed} errors`)
  }
  return missed ? 1 : 0
}

main().then(code => process.exit(code), (e) => {
  console.error(e)
  process.exit(2)
})
