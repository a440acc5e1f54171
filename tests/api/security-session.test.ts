/**
 * Session secret (security finding 1): the code has no default secret any more, so a session
 * token made with a secret that used to be guessable (the old built-in default, the old
 * host-name pattern of npm start, the old fixed test secret) is worthless: /api/users and
 * /api/audit answer 401 to it. The built server refuses to start with a missing or short secret.
 */
import { spawnSync } from 'node:child_process'
import { existsSync } from 'node:fs'
import { hostname } from 'node:os'
import { join } from 'node:path'
import { encode } from 'next-auth/jwt'
import { afterAll, describe, expect, it } from 'vitest'
import { as, Client, DEMO } from '../support/http'
import { closePool, sql } from '../support/db'

afterAll(closePool)

const OLD_SECRETS = [
  'counterpart-local-development-secret',
  `counterpart-local-${hostname()}-secret`,
  'counterpart-test-secret',
]

describe('forged session tokens', () => {
  it.each(OLD_SECRETS)('a token signed with "%s" is refused on /api/users and /api/audit', async (secret) => {
    const [admin] = await sql('SELECT id FROM users WHERE email = $1', [DEMO.admin])
    const token = await encode({ secret, token: { name: 'Forged', email: DEMO.admin, sub: String(admin.id), role: 'admin', uid: admin.id } })
    const forged = new Client({ cookie: `next-auth.session-token=${token}` })
    for (const path of ['/api/users', '/api/audit']) {
      const res = await forged.raw(path, { headers: { cookie: `next-auth.session-token=${token}` } })
      expect(res.status, `${path} with a token signed by ${secret}`).toBe(401)
    }
  })

  it('a real admin session still reads both (the refusal above is about the secret)', async () => {
    const admin = await as('admin')
    expect((await admin.get('/api/users')).status).toBe(200)
    expect((await admin.get('/api/audit')).status).toBe(200)
  })
})

describe('start-up without an adequate secret', () => {
  const entry = join(__dirname, '../../.output/server/index.mjs')
  it.skipIf(!existsSync(entry)).each([
    ['missing', ''],
    ['too short', 'x'.repeat(31)],
  ])('the built server refuses to start when the secret is %s, saying why', (_, secret) => {
    const run = spawnSync(process.execPath, [entry], {
      env: { PATH: process.env.PATH, NODE_ENV: 'production', NUXT_AUTH_SECRET: secret, PORT: '0', HOST: '127.0.0.1', AUTH_ORIGIN: 'http://127.0.0.1:1/api/auth', DATABASE_URL: 'postgres://nobody@127.0.0.1:1/none' },
      encoding: 'utf8',
      timeout: 20_000,
    })
    expect(run.status).not.toBe(0)
    expect(run.stderr).toContain('Counterpart will not start')
    expect(run.stderr).toContain('NUXT_AUTH_SECRET')
  })
})
