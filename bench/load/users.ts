/**
 * Simulated signed-in users for the load benchmark: each has its own session cookie and its
 * own study on the demo data (Veldmark's eviction-filing rate, VM-BR-04 adopting in 2017-07),
 * and loops over a fixed mix of what an analyst does: read the study, read the candidates,
 * change a pool decision, run a difference-in-differences, read a panel.
 */
import pg from 'pg'

export class Session {
  private cookies = new Map<string, string>()
  constructor(readonly base: string, private readonly address: string) {}

  cookieHeader(): string {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ')
  }

  /** With `parse` false the reply is read in full but parsed only when it is an error (what a load user needs). */
  async send(method: string, path: string, body?: unknown, form?: URLSearchParams, parse = true): Promise<{ status: number, body: any }> {
    const headers: Record<string, string> = { 'x-forwarded-for': this.address, cookie: this.cookieHeader() }
    let payload: string | URLSearchParams | undefined
    if (form) {
      payload = form
      headers['content-type'] = 'application/x-www-form-urlencoded'
    }
    else if (body !== undefined) {
      payload = JSON.stringify(body)
      headers['content-type'] = 'application/json'
    }
    const res = await fetch(this.base + path, { method, headers, body: payload, redirect: 'manual' })
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';')
      const i = pair!.indexOf('=')
      this.cookies.set(pair!.slice(0, i), pair!.slice(i + 1))
    }
    const text = await res.text()
    if (!parse && res.status < 400) return { status: res.status, body: text.length }
    let parsed: unknown = text
    try {
      parsed = text ? JSON.parse(text) : null
    }
    catch { /* keep the text */ }
    return { status: res.status, body: parsed }
  }

  async signIn(email: string, password: string): Promise<void> {
    const { body } = await this.send('GET', '/api/auth/csrf')
    const res = await this.send('POST', '/api/auth/callback/credentials', undefined,
      new URLSearchParams({ csrfToken: body.csrfToken, email, password, callbackUrl: `${this.base}/`, json: 'true' }))
    const error = res.body?.url ? new URL(res.body.url).searchParams.get('error') : 'no answer'
    if (error) throw new Error(`could not sign in ${email}: ${error}`)
  }
}

const PASSWORD = 'counterpart-demo'
const OUTCOME = 'eviction_filing_rate'
const TREATED = 'VM-BR-04'

function ok(res: { status: number, body: unknown }, what: string, expected = [200, 201]) {
  if (!expected.includes(res.status)) throw new Error(`${what}: ${res.status} ${JSON.stringify(res.body).slice(0, 300)}`)
  return res.body as any
}

/** `n` analyst accounts load-NN@counterpart.test with the demo password (copied hash). */
export async function makeAccounts(databaseUrl: string, n: number): Promise<string[]> {
  const db = new pg.Client({ connectionString: databaseUrl })
  await db.connect()
  const emails = Array.from({ length: n }, (_, i) => `load-${String(i + 1).padStart(2, '0')}@counterpart.test`)
  await db.query(`INSERT INTO users (email, name, role, password_hash, active)
    SELECT e, 'Load user ' || right(split_part(e, '@', 1), 2), 'analyst', (SELECT password_hash FROM users WHERE email = 'analyst@counterpart.test'), true
    FROM unnest($1::text[]) AS e ON CONFLICT (email) DO NOTHING`, [emails])
  await db.end()
  return emails
}

export interface LoadUser { session: Session, studyId: number, codes: string[] }

export async function prepareUser(base: string, email: string, index: number): Promise<LoadUser> {
  const session = new Session(base, `10.77.0.${index + 1}`)
  await session.signIn(email, PASSWORD)
  const study = ok(await session.send('POST', '/api/studies', {
    title: `Mediation rule, load study ${index + 1}`,
    question: 'Did mediation before an eviction filing lower the filing rate?',
    outcome: OUTCOME,
    treated: [TREATED],
    start: '2017-07',
  }), 'create a study')
  const candidates = ok(await session.send('GET', `/api/studies/${study.id}/candidates`), 'candidates') as { rows: { jurisdiction: string, flagged: boolean, suggested: boolean }[] }
  const codes = candidates.rows.filter(r => !r.flagged).map(r => r.jurisdiction)
  ok(await session.send('PUT', `/api/studies/${study.id}/pool`, {
    decisions: candidates.rows.filter(r => r.suggested).map(r => ({ jurisdiction: r.jurisdiction, included: true })),
  }), 'first pool')
  return { session, studyId: study.id, codes }
}

export type Action = 'study' | 'candidates' | 'pool' | 'did' | 'panel'
/** The mix: weights out of 100. */
export const MIX: [Action, number][] = [['study', 30], ['candidates', 20], ['pool', 15], ['did', 15], ['panel', 20]]

export function pickAction(r: number): Action {
  let acc = 0
  for (const [a, w] of MIX) {
    acc += w
    if (r * 100 < acc) return a
  }
  return 'study'
}

export function act(user: LoadUser, action: Action, r: () => number): Promise<{ status: number, body: any }> {
  const { session, studyId, codes } = user
  const code = () => codes[Math.floor(r() * codes.length)]!
  switch (action) {
    case 'study': return session.send('GET', `/api/studies/${studyId}`, undefined, undefined, false)
    case 'candidates': return session.send('GET', `/api/studies/${studyId}/candidates`, undefined, undefined, false)
    case 'pool': return session.send('PUT', `/api/studies/${studyId}/pool`, { decisions: [{ jurisdiction: code(), included: r() < 0.7, reason: 'Load benchmark change' }] }, undefined, false)
    case 'did': return session.send('POST', `/api/studies/${studyId}/runs`, { design: 'did' }, undefined, false)
    case 'panel': return session.send('GET', `/api/panel?measure=eviction_filings&units=${[...new Set([TREATED, code(), code(), code()])].join(',')}&from=2015-01&to=2019-12`, undefined, undefined, false)
  }
}
