/** Sign-in, the role rule every route uses, throttling, invitations. Against the running server and real PostgreSQL. */
import { afterAll, afterEach, describe, expect, it } from 'vitest'
import { anonymous, as, Client, DEMO } from '../support/http'
import { clearFailedSignIns, closePool, sql } from '../support/db'

afterAll(closePool)

describe('sessions and roles', () => {
  it('refuses a route without a session with 401 and a clear message', async () => {
    const r = await anonymous().get('/api/users')
    expect(r.status).toBe(401)
    expect(r.body.message).toBe('Sign in first.')
  })

  it('refuses the wrong role with 403 naming the role needed', async () => {
    for (const role of ['analyst', 'reviewer'] as const) {
      const r = await (await as(role)).get('/api/users')
      expect(r.status).toBe(403)
      expect(r.body.message).toContain('needs the admin role')
    }
  })

  it('lets an admin through and puts the role on the session', async () => {
    const admin = await as('admin')
    expect((await admin.get('/api/users')).status).toBe(200)
    const session = await admin.get('/api/auth/session')
    expect(session.body.user).toMatchObject({ email: DEMO.admin, role: 'admin' })
  })

  it('signs out: the session cookie no longer works', async () => {
    const analyst = await as('analyst')
    expect((await analyst.get('/api/me')).status).toBe(200)
    const { body } = await analyst.get('/api/auth/csrf')
    await analyst.raw('/api/auth/signout', {
      method: 'POST',
      body: new URLSearchParams({ csrfToken: body.csrfToken, callbackUrl: '/login', json: 'true' }),
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
    })
    expect((await analyst.get('/api/me')).status).toBe(401)
  })

  it('a deactivated account loses access at once, even with a live session', async () => {
    const admin = await as('admin')
    const email = `deact-${Date.now()}@counterpart.test`
    const created = await admin.post('/api/users', { email, name: 'Short Lived', role: 'analyst', password: 'long-enough-pass' })
    expect(created.status).toBe(201)
    const user = new Client()
    expect(await user.signIn(email, 'long-enough-pass')).toBeNull()
    expect((await user.get('/api/me')).status).toBe(200)
    expect((await admin.patch(`/api/users/${created.body.id}`, { active: false })).status).toBe(200)
    expect((await user.get('/api/me')).status).toBe(401)
    expect(await user.signIn(email, 'long-enough-pass')).toContain('do not match an active account')
    await clearFailedSignIns()
  })

  it('an admin cannot remove their own admin role', async () => {
    const admin = await as('admin')
    const me = await admin.get('/api/me')
    const r = await admin.patch(`/api/users/${me.body.id}`, { role: 'analyst' })
    expect(r.status).toBe(409)
  })

  it('rejects bad user input with field issues', async () => {
    const r = await (await as('admin')).post('/api/users', { email: 'not-an-email', name: '', role: 'boss', password: 'short' })
    expect(r.status).toBe(400)
    const paths = r.body.data.issues.map((i: { path: string }) => i.path)
    expect(paths).toEqual(expect.arrayContaining(['email', 'name', 'role', 'password']))
  })
})

describe('sign-in throttling', () => {
  afterEach(clearFailedSignIns)

  it('after 5 failures for one account, even the right password must wait, with 429 and Retry-After', async () => {
    const admin = await as('admin')
    const email = `throttle-${Date.now()}@counterpart.test`
    await admin.post('/api/users', { email, name: 'Throttled', role: 'analyst', password: 'the-right-password' })
    for (let i = 0; i < 5; i++) {
      expect(await new Client().signIn(email, 'wrong-password')).toContain('do not match')
    }
    const refused = await new Client().signInReply(email, 'the-right-password')
    expect(refused.status).toBe(429)
    expect(refused.retryAfter).toBe(1)
    expect(refused.error).toContain('Too many failed sign-ins for this account')
    expect(refused.error).toContain('Try again in 1 second')
  })

  it('after the wait one more attempt is allowed; a success starts the account count afresh', async () => {
    const admin = await as('admin')
    const email = `throttle-wait-${Date.now()}@counterpart.test`
    await admin.post('/api/users', { email, name: 'Patient', role: 'analyst', password: 'the-right-password' })
    for (let i = 0; i < 5; i++) await new Client().signIn(email, 'wrong-password')
    expect((await new Client().signInReply(email, 'the-right-password')).status).toBe(429)
    await new Promise(r => setTimeout(r, 1100))
    expect(await new Client().signIn(email, 'the-right-password')).toBeNull()
    expect(await new Client().signIn(email, 'wrong-password')).toContain('do not match')
    expect(await new Client().signIn(email, 'the-right-password')).toBeNull()
  })
})

describe('invitations', () => {
  async function invite(role = 'analyst') {
    const admin = await as('admin')
    const email = `inv-${Date.now()}-${Math.random().toString(36).slice(2, 6)}@counterpart.test`
    const r = await admin.post('/api/invitations', { email, name: 'Invited Person', role })
    expect(r.status).toBe(201)
    const messages = await (await fetch(`${process.env.MAIL_CATCHER_URL ?? 'http://127.0.0.1:2581'}/messages`)).json() as { to: string, text: string }[]
    const mail = messages.find(m => m.to === email)
    expect(mail, 'the invitation mail reached the catcher').toBeTruthy()
    const token = mail!.text.match(/\/invite\/([\w-]+)/)![1]!
    return { email, token }
  }

  it('accepting sets a password that signs in with the invited role; the link works once', async () => {
    const { email, token } = await invite('reviewer')
    expect((await anonymous().get(`/api/invitations/${token}`)).body).toMatchObject({ email, role: 'reviewer', state: 'pending' })
    const accepted = await anonymous().post(`/api/invitations/${token}/accept`, { password: 'my-new-password' })
    expect(accepted.status).toBe(200)
    const c = new Client()
    expect(await c.signIn(email, 'my-new-password')).toBeNull()
    expect((await c.get('/api/me')).body.role).toBe('reviewer')
    const again = await anonymous().post(`/api/invitations/${token}/accept`, { password: 'another-password' })
    expect(again.status).toBe(404)
  })

  it('refuses an expired invitation with 410 and creates no account', async () => {
    const { email, token } = await invite()
    await sql(`UPDATE invitations SET expires_at = now() - interval '1 minute' WHERE email = $1`, [email])
    const r = await anonymous().post(`/api/invitations/${token}/accept`, { password: 'my-new-password' })
    expect(r.status).toBe(410)
    expect(r.body.message).toContain('expired')
    expect(await sql('SELECT id FROM users WHERE email = $1', [email])).toHaveLength(0)
  })

  it('refuses a short password and an unknown token', async () => {
    const { token } = await invite()
    expect((await anonymous().post(`/api/invitations/${token}/accept`, { password: 'short' })).status).toBe(400)
    expect((await anonymous().post(`/api/invitations/${'x'.repeat(32)}/accept`, { password: 'long-enough-pass' })).status).toBe(404)
  })

  it('only admins invite', async () => {
    const r = await (await as('analyst')).post('/api/invitations', { email: 'a@b.test', name: 'X', role: 'admin' })
    expect(r.status).toBe(403)
  })
})
