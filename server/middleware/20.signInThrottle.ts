/**
 * POST /api/auth/callback/credentials: before the password is checked, refuse an attempt that
 * comes too soon after repeated failures (server/services/signInThrottle.ts) with 429 and a
 * Retry-After header. The body also carries `url` with the message as ?error=, the shape the
 * sign-in page reads from next-auth, so the page shows the message.
 */
import { throttleVerdict } from '../services/signInThrottle'

export default defineEventHandler(async (event) => {
  if (event.method !== 'POST' || !event.path.startsWith('/api/auth/callback/')) return
  const body = await readBody<Record<string, unknown> | undefined>(event).catch(() => undefined)
  const email = String(body?.email ?? '').trim().toLowerCase()
  if (!email || email.includes('\u0000')) return // authorize() refuses these
  const verdict = await throttleVerdict(useDb(), email, clientAddress(event))
  if (!verdict) return
  setResponseStatus(event, 429, 'Too Many Requests')
  setResponseHeader(event, 'Retry-After', verdict.retryAfter)
  const url = new URL('/login', getRequestURL(event).origin)
  url.searchParams.set('error', verdict.message)
  return { statusCode: 429, message: verdict.message, retryAfter: verdict.retryAfter, url: url.toString() }
})
