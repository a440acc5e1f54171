/**
 * Proof that a running job's process is alive, independent of its event loop: while a job
 * runs, its process holds a session-level PostgreSQL advisory lock keyed by the job's id on
 * one connection of its own. When the process dies (killed, crashed, machine gone), the
 * server closes that session and the lock disappears, so the sweep can tell a dead job from
 * one whose process is merely busy computing (a long synchronous estimate delays heartbeats
 * but keeps the lock).
 */
import pg from 'pg'

/** First half of the two-part advisory lock key: the jobs namespace ("Job" in ASCII). */
export const JOB_LOCK_SPACE = 0x4a6f62

/** SQL that is true while some session holds the lock of the job whose id is `idSql`. */
export function lockHeldSql(idSql: string): string {
  return `EXISTS (SELECT 1 FROM pg_locks l
    WHERE l.locktype = 'advisory' AND l.granted AND l.objsubid = 2
      AND l.database = (SELECT oid FROM pg_database WHERE datname = current_database())
      AND l.classid = ${JOB_LOCK_SPACE} AND l.objid::bigint = (hashtext(${idSql}::text)::bigint & 4294967295))`
}

let client: Promise<pg.Client> | undefined

function connection(url: string): Promise<pg.Client> {
  client ??= (async () => {
    const c = new pg.Client({ connectionString: url, application_name: 'counterpart job liveness' })
    c.on('error', () => { client = undefined })
    c.on('end', () => { client = undefined })
    await c.connect()
    return c
  })().catch((e) => {
    client = undefined
    throw e
  })
  return client
}

/** Takes the job's lock; false if it could not (the sweep then relies on the heartbeat). */
export async function holdJobLock(url: string, jobId: string): Promise<boolean> {
  try {
    const c = await connection(url)
    const { rows } = await c.query<{ ok: boolean }>('SELECT pg_try_advisory_lock($1, hashtext($2)) AS ok', [JOB_LOCK_SPACE, jobId])
    return rows[0]?.ok === true
  }
  catch {
    return false
  }
}

export async function releaseJobLock(url: string, jobId: string): Promise<void> {
  try {
    const c = await connection(url)
    await c.query('SELECT pg_advisory_unlock($1, hashtext($2))', [JOB_LOCK_SPACE, jobId])
  }
  catch { /* the session is gone, and its locks with it */ }
}

export async function closeLiveness(): Promise<void> {
  const c = await client?.catch(() => undefined)
  client = undefined
  await c?.end().catch(() => {})
}
