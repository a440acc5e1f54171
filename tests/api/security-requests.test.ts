/**
 * Cross-site requests, response headers and hostile input (security findings 4, 5 and 6),
 * against the running server.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { anonymous, as, BASE_URL, type Client, DEMO } from '../support/http'
import { closePool, sql } from '../support/db'

let analyst: Client
let studyId: number

beforeAll(async () => {
  analyst = await as('analyst')
  // the demo scenario's registry (db/seed): a monthly outcome and one of its jurisdictions
  const [{ code }] = await sql('SELECT code FROM jurisdictions ORDER BY code LIMIT 1')
  const study = await analyst.post('/api/studies', { title: `Requests ${Date.now()}`, outcome: 'eviction_filings', treated: [code], start: '2020-01' })
  expect(study.status, JSON.stringify(study.body)).toBe(201)
  studyId = study.body.id
})
afterAll(closePool)

const comments = () => `/api/studies/${studyId}/comments`
const countComments = async () => (await sql('SELECT count(*)::int AS n FROM comments WHERE study_id = $1', [studyId]))[0].n as number

describe('cross-site requests', () => {
  it('refuses a foreign Origin on /api/studies/:id/comments, form-encoded and JSON, and writes nothing', async () => {
    const before = await countComments()
    const form = await analyst.raw(comments(), {
      method: 'POST',
      body: new URLSearchParams({ body: 'posted from another site' }),
      headers: { 'content-type': 'application/x-www-form-urlencoded', 'origin': 'https://elsewhere.example' },
    })
    expect(form.status).toBe(403)
    expect((await form.json()).message).toContain('https://elsewhere.example')
    const json = await analyst.raw(comments(), {
      method: 'POST',
      body: JSON.stringify({ body: 'posted from another site' }),
      headers: { 'content-type': 'application/json', 'origin': 'https://elsewhere.example' },
    })
    expect(json.status).toBe(403)
    const nullOrigin = await analyst.raw(comments(), { method: 'POST', body: '{"body":"x"}', headers: { 'content-type': 'application/json', 'origin': 'null' } })
    expect(nullOrigin.status).toBe(403)
    expect(await countComments()).toBe(before)
  })

  it('refuses a request the browser marks as cross-site, even without Origin', async () => {
    const res = await analyst.raw(comments(), { method: 'POST', body: '{"body":"x"}', headers: { 'content-type': 'application/json', 'sec-fetch-site': 'cross-site' } })
    expect(res.status).toBe(403)
    expect((await res.json()).message).toContain('another site')
  })

  it('takes JSON only: a form-encoded or plain-text body from our own origin gets 415', async () => {
    for (const type of ['application/x-www-form-urlencoded', 'text/plain', 'multipart/form-data; boundary=x']) {
      const res = await analyst.raw(comments(), { method: 'POST', body: 'body=hello', headers: { 'content-type': type, 'origin': BASE_URL } })
      expect(res.status, type).toBe(415)
      expect((await res.json()).message).toContain('application/json')
    }
  })

  it('allows the same call from our own origin as JSON', async () => {
    const res = await analyst.raw(comments(), { method: 'POST', body: JSON.stringify({ body: 'From our own page.' }), headers: { 'content-type': 'application/json', 'origin': BASE_URL, 'sec-fetch-site': 'same-origin' } })
    expect(res.status).toBe(201)
    expect(res.headers.get('access-control-allow-origin')).toBe(BASE_URL)
  })

  it('sign-in (form-encoded, next-auth CSRF token) works from our origin and is refused from another', async () => {
    const ok = await anonymous().signInReply(DEMO.reviewer, undefined, { origin: BASE_URL, 'sec-fetch-site': 'same-origin' })
    expect(ok).toMatchObject({ status: 200, error: null })
    const foreign = await anonymous().signInReply(DEMO.reviewer, undefined, { origin: 'https://elsewhere.example' })
    expect(foreign.status).toBe(403)
  })
})

describe('response headers', () => {
  it('a page carries CSP, frame, nosniff and referrer headers, and no X-Powered-By', async () => {
    const res = await fetch(`${BASE_URL}/login`)
    expect(res.status).toBe(200)
    const csp = res.headers.get('content-security-policy') ?? ''
    expect(csp).toContain('default-src \'self\'')
    expect(csp).toContain('frame-ancestors \'none\'')
    expect(csp).toMatch(/script-src [^;]*'nonce-[\w+/=]+'/)
    expect(res.headers.get('x-frame-options')).toBe('DENY')
    expect(res.headers.get('x-content-type-options')).toBe('nosniff')
    expect(res.headers.get('referrer-policy')).toBe('same-origin')
    expect(res.headers.get('x-powered-by')).toBeNull()
    expect(res.headers.get('access-control-allow-origin')).toBeNull()
  })

  it('an API answer carries nosniff and no X-Powered-By; a foreign origin gets no CORS grant', async () => {
    const res = await analyst.raw('/api/me', { headers: { origin: 'https://elsewhere.example' } })
    expect(res.status).toBe(200)
    expect(res.headers.get('x-content-type-options')).toBe('nosniff')
    expect(res.headers.get('x-powered-by')).toBeNull()
    expect(res.headers.get('access-control-allow-origin')).toBeNull()
  })

  it('refuses a JSON body over 1 MB with 413, PATCH included', async () => {
    const big = JSON.stringify({ body: 'x'.repeat(1_100_000) })
    for (const method of ['POST', 'PATCH']) {
      const res = await analyst.raw(method === 'POST' ? comments() : `/api/studies/${studyId}`, { method, body: big, headers: { 'content-type': 'application/json' } })
      expect(res.status, method).toBe(413)
    }
  })
})

describe('hostile input', () => {
  it('a NUL character in any text field is 400, not 500', async () => {
    const cases: [string, string, unknown][] = [
      ['POST', comments(), { body: 'before\u0000after' }],
      ['POST', '/api/studies', { title: 'Nul\u0000title', outcome: 'x', treated: ['X'], start: '2007' }],
      ['POST', '/api/jurisdictions', { code: 'NUL-1', name: 'Nul\u0000town', kind: 'town' }],
    ]
    const admin = await as('admin')
    for (const [method, path, body] of cases) {
      const res = await admin.request(method, path, body)
      expect(res.status, `${method} ${path}`).toBe(400)
      expect(res.body.message, path).toContain('NUL')
    }
    const query = await admin.get('/api/audit?action=a%00b')
    expect(query.status).toBe(400)
  })

  it('ids at or above 2^31, and fractions, are 400 on studies, runs, sources and users; 2^31 - 1 is a plain 404', async () => {
    const admin = await as('admin')
    for (const bad of ['2147483648', '9999999999999', '1.5', '-1', 'abc']) {
      const replies = {
        study: await admin.get(`/api/studies/${bad}`),
        run: await admin.get(`/api/studies/${studyId}/runs/${bad}`),
        'run of study': await admin.get(`/api/studies/${bad}/runs/1`),
        source: await admin.get(`/api/sources/${bad}`),
        user: await admin.patch(`/api/users/${bad}`, { name: 'X' }),
        comments: await admin.get(`/api/studies/${bad}/comments`),
      }
      for (const [what, r] of Object.entries(replies)) expect(r.status, `${what} ${bad}: ${JSON.stringify(r.body)}`).toBe(400)
    }
    expect((await admin.get('/api/studies/2147483647')).status).toBe(404)
    const reviewer = await admin.post(`/api/studies/${studyId}/review`, { action: 'request', reviewerId: 2 ** 31 })
    expect(reviewer.status).toBe(400)
  })
})
