import { randomBytes } from 'node:crypto'
/**
 * Backup and restore (scripts/backup.sh, scripts/restore.sh): an approved study is backed up
 * with pg_dump, restored into a fresh database, and a second server started on the restored
 * database shows the same runs and, asked to estimate again (on a new version of the
 * approved study, as a person would), reaches the same data fingerprint and the same result
 * as the same rerun on the original database. Restore refuses to overwrite a database that
 * holds tables without --force, refuses a name that is taken, and refuses a file it cannot read.
 */
import { execFileSync, spawn, type ChildProcess } from 'node:child_process'
import { rmSync, writeFileSync } from 'node:fs'
import { createServer } from 'node:net'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import pg from 'pg'
import { as, DEMO, type Client } from '../support/http'
import { closePool, TEST_DATABASE_URL } from '../support/db'
import { studyWithRuns, type StudyFixture } from '../support/studyFixture'

const url = new URL(TEST_DATABASE_URL)
const dbName = url.pathname.slice(1)
/** The same server, another database (keeps ?host=... when the URL goes through a socket). */
const urlOf = (db: string) => {
  const u = new URL(TEST_DATABASE_URL)
  u.pathname = `/${db}`
  return u.toString()
}
const restored = `counterpart_restored_${Date.now().toString(36)}`
const scriptEnv = { ...process.env, COUNTERPART_PG_PORT: url.port, COUNTERPART_DB_NAME: dbName }

function script(name: string, args: string[]): { code: number, stdout: string, stderr: string } {
  try {
    const stdout = execFileSync('bash', [`scripts/${name}.sh`, ...args], { env: scriptEnv, encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] })
    return { code: 0, stdout: stdout.trim(), stderr: '' }
  }
  catch (e) {
    const err = e as { status: number, stdout: string, stderr: string }
    return { code: err.status, stdout: String(err.stdout).trim(), stderr: String(err.stderr) }
  }
}

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer()
    srv.listen(0, '127.0.0.1', () => {
      const { port } = srv.address() as { port: number }
      srv.close(() => resolve(port))
    })
    srv.on('error', reject)
  })
}

let f: StudyFixture
let backupFile: string
let second: ChildProcess | undefined
let secondUrl: string

beforeAll(async () => {
  f = await studyWithRuns()
  const reviewers = await f.analyst.get('/api/reviewers')
  const reviewerId = reviewers.body.find((r: { email: string }) => r.email === DEMO.reviewer).id
  expect((await f.analyst.post(`/api/studies/${f.studyId}/review`, { action: 'request', reviewerId })).status).toBe(200)
  const approved = await f.reviewer.post(`/api/studies/${f.studyId}/review`, { action: 'approve' })
  expect(approved.status, JSON.stringify(approved.body)).toBe(200)
}, 120_000)

afterAll(async () => {
  if (second?.pid) {
    try { process.kill(-second.pid) }
    catch { second.kill() }
  }
  await new Promise(r => setTimeout(r, 500))
  const admin = new pg.Client({ connectionString: urlOf('postgres') })
  await admin.connect()
  await admin.query(`DROP DATABASE IF EXISTS ${restored} WITH (FORCE)`).catch(() => {})
  await admin.end()
  if (backupFile) for (const file of [backupFile, `${backupFile}.junk`]) rmSync(file, { force: true })
  await closePool()
})

/** A new version of the approved study, and the did run estimated again on it. */
async function rerun(analyst: Client, studyId: number) {
  const version = await analyst.post(`/api/studies/${studyId}/versions`)
  expect(version.status, JSON.stringify(version.body)).toBe(201)
  const run = await analyst.post(`/api/studies/${version.body.id}/runs`, { design: 'did' })
  expect(run.status, JSON.stringify(run.body)).toBe(201)
  return run.body
}

describe('backup', () => {
  it('writes a timestamped custom-format dump under .data/backups', () => {
    const out = script('backup', ['--db', dbName])
    expect(out.code, out.stderr).toBe(0)
    expect(out.stdout).toMatch(new RegExp(`/\\.data/backups/${dbName}-\\d{8}-\\d{6}(-\\d+)?\\.dump$`))
    backupFile = out.stdout
    expect(execFileSync('head', ['-c', '5', backupFile], { encoding: 'latin1' })).toBe('PGDMP')
  })
})

describe('restore refusals', () => {
  it('will not overwrite a database that holds tables without --force', () => {
    const out = script('restore', [backupFile])
    expect(out.code).toBe(3)
    expect(out.stderr).toMatch(new RegExp(`database ${dbName} already holds \\d+ tables; add --force`))
  })

  it('refuses a missing file, an unreadable file and a bad database name, changing nothing', () => {
    expect(script('restore', ['/nonexistent/backup.dump', '--into', restored])).toMatchObject({ code: 2, stderr: expect.stringContaining('no backup file') })
    const junk = `${backupFile}.junk`
    writeFileSync(junk, 'not a dump')
    expect(script('restore', [junk, '--into', restored])).toMatchObject({ code: 2, stderr: expect.stringContaining('not a backup pg_restore can read') })
    expect(script('restore', [backupFile, '--into', 'Bad-Name'])).toMatchObject({ code: 2, stderr: expect.stringContaining('not a database name') })
    expect(script('restore', [])).toMatchObject({ code: 2 })
  })
})

describe('restore into a fresh database', () => {
  it('restores, and refuses the same name a second time', () => {
    const out = script('restore', [backupFile, '--into', restored])
    expect(out.code, out.stderr).toBe(0)
    expect(out.stdout).toBe(restored)
    const again = script('restore', [backupFile, '--into', restored])
    expect(again.code).toBe(3)
    expect(again.stderr).toContain(`database ${restored} already exists`)
  })

  it('a server on the restored database shows the approved study and reruns it to the same fingerprint and result', async () => {
    const port = await freePort()
    secondUrl = `http://127.0.0.1:${port}`
    second = spawn('node', ['.output/server/index.mjs'], {
      detached: true,
      stdio: 'ignore',
      env: {
        ...process.env,
        DATABASE_URL: urlOf(restored),
        HOST: '127.0.0.1',
        PORT: String(port),
        NUXT_AUTH_SECRET: randomBytes(48).toString('base64'), // the built server refuses a short or missing secret
        AUTH_ORIGIN: `${secondUrl}/api/auth`,
        PUBLIC_ORIGIN: secondUrl,
      },
    })
    let up = false
    for (let i = 0; i < 120 && !up; i++) {
      up = await fetch(`${secondUrl}/api/auth/csrf`).then(r => r.ok, () => false)
      if (!up) await new Promise(r => setTimeout(r, 250))
    }
    expect(up, 'second server answering').toBe(true)

    const analyst = await as('analyst', secondUrl)
    const study = await analyst.get(`/api/studies/${f.studyId}`)
    expect(study.status).toBe(200)
    expect(study.body).toMatchObject({ status: 'approved' })
    const stored = await analyst.get(`/api/studies/${f.studyId}/runs/${f.runs.did.id}`)
    expect(stored.status).toBe(200)
    expect(stored.body.fingerprint).toBe(f.runs.did.fingerprint)
    expect(stored.body.result).toEqual(f.runs.did.result)

    const onRestored = await rerun(analyst, f.studyId)
    const onOriginal = await rerun(f.analyst, f.studyId)
    expect(onRestored.fingerprint).toBe(onOriginal.fingerprint)
    expect(onRestored.result).toEqual(onOriginal.result)
    // The new version reads the approved run's rows under the same spec: the same fingerprint and effect.
    expect(onRestored.releaseIds).toEqual(f.runs.did.releaseIds)
    expect(onRestored.fingerprint).toBe(f.runs.did.fingerprint)
    expect(onRestored.result.effect).toEqual(f.runs.did.result.effect)
    expect(onRestored.result.effect.estimate).toEqual(expect.any(Number))
  }, 120_000)
})
