/** Migrations apply cleanly on an empty database (and twice in a row, as npm start does). */
import pg from 'pg'
import { afterAll, describe, expect, it } from 'vitest'
import { applyMigrations } from '../../scripts/migrate'
import { TEST_DATABASE_URL } from '../support/db'

const name = `counterpart_migrate_${process.pid}_${Date.now()}`
const adminUrl = TEST_DATABASE_URL
const freshUrl = (() => { const u = new URL(TEST_DATABASE_URL); u.pathname = `/${name}`; return u.toString() })()

async function onServer(statement: string) {
  const client = new pg.Client({ connectionString: adminUrl })
  await client.connect()
  try { await client.query(statement) }
  finally { await client.end() }
}

describe('migrations', () => {
  afterAll(async () => { await onServer(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`) })

  it('create every table on an empty database, and a second run changes nothing', async () => {
    await onServer(`CREATE DATABASE ${name}`)
    await applyMigrations(freshUrl)
    await applyMigrations(freshUrl)
    const client = new pg.Client({ connectionString: freshUrl })
    await client.connect()
    const { rows } = await client.query<{ table_name: string }>(
      `SELECT table_name FROM information_schema.tables WHERE table_schema = 'public' ORDER BY table_name`)
    await client.end()
    const tables = rows.map(r => r.table_name)
    for (const t of ['users', 'invitations', 'sign_in_attempts', 'jurisdictions', 'observations', 'source_releases',
      'policy_events', 'studies', 'study_runs', 'study_pool_decisions', 'validity_notes', 'comments', 'audit_log', 'jobs']) {
      expect(tables).toContain(t)
    }
  })
})
