/**
 * Sign-in throttling (security finding 3): the address is the socket's, not X-Forwarded-For
 * (which any client can write), unless COUNTERPART_TRUSTED_PROXY says a proxy is trusted; the
 * test server trusts none. So 22 failed sign-ins, each for a different account and each with
 * a new X-Forwarded-For, are still counted against one address: from the 21st on (20 are
 * allowed) the attempt is refused with 429 and Retry-After before any password is checked.
 */
import { afterAll, afterEach, describe, expect, it } from 'vitest'
import { Client } from '../support/http'
import { clearFailedSignIns, closePool } from '../support/db'

afterEach(clearFailedSignIns)
afterAll(closePool)

describe('throttling by address ignores X-Forwarded-For', () => {
  it('22 failures with a new X-Forwarded-For each are throttled', async () => {
    await clearFailedSignIns()
    const tag = Date.now().toString(36)
    const replies = []
    for (let i = 0; i < 22; i++) {
      replies.push(await new Client().signInReply(`nobody-${tag}-${i}@counterpart.test`, 'wrong-password', { 'x-forwarded-for': `203.0.113.${i + 1}` }))
    }
    expect(replies.slice(0, 20).map(r => [r.status, r.error])).toEqual(Array(20).fill([401, 'That e-mail address and password do not match an active account.']))
    const last = replies[21]!
    expect(last.status).toBe(429)
    expect(last.retryAfter).toBeGreaterThanOrEqual(1)
    expect(last.retryAfter).toBeLessThanOrEqual(60)
    expect(last.error).toContain('Too many failed sign-ins from this address')
  })
})
