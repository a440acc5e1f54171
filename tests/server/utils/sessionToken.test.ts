/**
 * The session token with a key derived once (server/utils/sessionToken.ts) against
 * next-auth's own encode() and decode() (the library the sign-in uses): each reads what the
 * other wrote, a wrong secret, an altered token and an expired token are refused.
 */
import { describe, expect, it } from 'vitest'
import { decode, encode } from 'next-auth/jwt'
import { decodeSessionToken, encodeSessionToken } from '../../../server/utils/sessionToken'

const secret = 'a-test-secret-of-more-than-32-characters-0123456789'
const claims = { email: 'analyst@counterpart.test', name: 'An Analyst', role: 'analyst', uid: 7 }

describe('session token', () => {
  it('reads what next-auth wrote, and next-auth reads what it writes', async () => {
    const theirs = await encode({ token: claims, secret, maxAge: 3600 })
    expect(await decodeSessionToken({ token: theirs, secret })).toMatchObject(claims)
    const ours = await encodeSessionToken({ token: claims, secret, maxAge: 3600 })
    const back = await decode({ token: ours, secret })
    expect(back).toMatchObject(claims)
    expect(back!.exp! - back!.iat!).toBe(3600)
    expect(back!.jti).toMatch(/^[0-9a-f-]{36}$/)
    // a second call uses the same derived key and still agrees
    expect(await decode({ token: await encodeSessionToken({ token: claims, secret, maxAge: 60 }), secret })).toMatchObject(claims)
  })

  it('refuses a wrong secret, an altered token and an expired one; no token is no session', async () => {
    const ours = await encodeSessionToken({ token: claims, secret, maxAge: 3600 })
    await expect(decodeSessionToken({ token: ours, secret: `${secret}-other` })).rejects.toThrow()
    const parts = ours.split('.')
    parts[3] = parts[3]!.slice(0, -2) + (parts[3]!.endsWith('AA') ? 'BB' : 'AA')
    await expect(decodeSessionToken({ token: parts.join('.'), secret })).rejects.toThrow()
    const expired = await encodeSessionToken({ token: claims, secret, maxAge: -60 })
    await expect(decodeSessionToken({ token: expired, secret })).rejects.toThrow(/exp/)
    expect(await decodeSessionToken({ token: '', secret })).toBeNull()
  })
})
