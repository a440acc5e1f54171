/**
 * HTTP helpers for the API suite: a tiny client with a cookie jar that signs in through
 * next-auth's credentials flow (csrf -> callback -> session cookie), as a browser would.
 * The server under test is COUNTERPART_TEST_URL (scripts/test.sh starts it).
 */
export const BASE_URL = process.env.COUNTERPART_TEST_URL ?? 'http://127.0.0.1:3100'
export const DEMO_PASSWORD = 'counterpart-demo'
export const DEMO = {
  admin: 'admin@counterpart.test',
  analyst: 'analyst@counterpart.test',
  reviewer: 'reviewer@counterpart.test',
} as const

export interface Reply<T = any> { status: number, body: T, headers: Headers }

export class Client {
  private cookies = new Map<string, string>()

  constructor(private readonly headers: Record<string, string> = {}, private readonly baseUrl = BASE_URL) {}

  private cookieHeader(): string {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ')
  }

  private keep(res: Response) {
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';')
      const i = pair!.indexOf('=')
      this.cookies.set(pair!.slice(0, i), pair!.slice(i + 1))
    }
  }

  async raw(path: string, init: RequestInit = {}): Promise<Response> {
    const res = await fetch(this.baseUrl + path, {
      redirect: 'manual',
      ...init,
      headers: { ...this.headers, cookie: this.cookieHeader(), ...(init.headers as Record<string, string> | undefined) },
    })
    this.keep(res)
    return res
  }

  async request<T = any>(method: string, path: string, body?: unknown): Promise<Reply<T>> {
    const init: RequestInit = { method }
    if (body instanceof FormData) init.body = body
    else if (body !== undefined) {
      init.body = JSON.stringify(body)
      init.headers = { 'content-type': 'application/json' }
    }
    const res = await this.raw(path, init)
    const text = await res.text()
    let parsed: unknown = text
    try {
      parsed = text ? JSON.parse(text) : null
    }
    catch { /* not JSON: keep the text */ }
    return { status: res.status, body: parsed as T, headers: res.headers }
  }

  get<T = any>(path: string) { return this.request<T>('GET', path) }
  post<T = any>(path: string, body?: unknown) { return this.request<T>('POST', path, body) }
  put<T = any>(path: string, body?: unknown) { return this.request<T>('PUT', path, body) }
  patch<T = any>(path: string, body?: unknown) { return this.request<T>('PATCH', path, body) }
  delete<T = any>(path: string) { return this.request<T>('DELETE', path) }

  /** Signs in; returns the error text next-auth reports, or null on success. */
  async signIn(email: string, password = DEMO_PASSWORD): Promise<string | null> {
    return (await this.signInReply(email, password)).error
  }

  /**
   * Signs in and returns the whole answer: the HTTP status (429 when throttled, with Retry-After
   * in seconds) and the error text (from the ?error= of the url next-auth answers with).
   */
  async signInReply(email: string, password = DEMO_PASSWORD, headers: Record<string, string> = {}): Promise<{ status: number, error: string | null, retryAfter: number | null }> {
    const { body } = await this.get<{ csrfToken: string }>('/api/auth/csrf')
    const form = new URLSearchParams({ csrfToken: body.csrfToken, email, password, callbackUrl: `${this.baseUrl}/`, json: 'true' })
    const res = await this.raw('/api/auth/callback/credentials', {
      method: 'POST',
      body: form,
      headers: { 'content-type': 'application/x-www-form-urlencoded', ...headers },
    })
    const text = await res.text()
    let reply: { url?: string, message?: string } = {}
    try {
      reply = JSON.parse(text)
    }
    catch { /* not JSON */ }
    const error = reply.url ? new URL(reply.url).searchParams.get('error') : (reply.message ?? `HTTP ${res.status}: ${text.slice(0, 200)}`)
    const retry = res.headers.get('retry-after')
    return { status: res.status, error, retryAfter: retry ? Number(retry) : null }
  }
}

/**
 * A client signed in as one of the demo roles. Every test client signs in from the same address
 * (the server ignores X-Forwarded-For): a test that makes failed sign-ins clears them afterwards
 * (clearFailedSignIns in tests/support/db.ts) so the address throttle does not slow the rest.
 */
export async function as(role: keyof typeof DEMO, baseUrl = BASE_URL): Promise<Client> {
  const client = new Client({}, baseUrl)
  const error = await client.signIn(DEMO[role])
  if (error) throw new Error(`could not sign in as ${role}: ${error}`)
  return client
}

export function anonymous(): Client {
  return new Client()
}
