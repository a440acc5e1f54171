/**
 * The session cookie's token, written and read exactly as next-auth 4 does it (an encrypted
 * JWT: "dir" with A256GCM, the key derived from the auth secret with HKDF-SHA-256 and the
 * info "NextAuth.js Generated Encryption Key", issued-at, expiry and a random id), except
 * that the key is derived once per secret instead of on every request: next-auth derives it
 * for each read and again for each refresh, and that derivation was a notable share of the
 * web process's time under load. Tokens stay interchangeable with next-auth's own encode()
 * and decode() (tests/server/utils/sessionToken.test.ts checks both ways), so sessions
 * signed before keep working. Registered as `jwt: { encode, decode }` in
 * server/api/auth/[...].ts.
 */
import { randomUUID } from 'node:crypto'
import hkdf from '@panva/hkdf'
import { EncryptJWT, jwtDecrypt, type JWTPayload } from 'jose'

const INFO = 'NextAuth.js Generated Encryption Key'
const DEFAULT_MAX_AGE_S = 30 * 24 * 60 * 60
const keys = new Map<string, Promise<Uint8Array>>()

function keyFor(secret: string | Buffer): Promise<Uint8Array> {
  const id = typeof secret === 'string' ? secret : secret.toString('base64')
  let key = keys.get(id)
  if (!key) {
    if (keys.size >= 4) keys.clear() // a secret is set once per process; never let the map grow
    keys.set(id, (key = hkdf('sha256', secret, '', INFO, 32)))
  }
  return key
}

export async function encodeSessionToken(params: { token?: JWTPayload, secret: string | Buffer, maxAge?: number }): Promise<string> {
  const { token = {}, secret, maxAge = DEFAULT_MAX_AGE_S } = params
  return new EncryptJWT(token)
    .setProtectedHeader({ alg: 'dir', enc: 'A256GCM' })
    .setIssuedAt()
    .setExpirationTime(((Date.now() / 1000) | 0) + maxAge)
    .setJti(randomUUID())
    .encrypt(await keyFor(secret))
}

export async function decodeSessionToken(params: { token?: string, secret: string | Buffer }): Promise<JWTPayload | null> {
  const { token, secret } = params
  if (!token) return null
  const { payload } = await jwtDecrypt(token, await keyFor(secret), { clockTolerance: 15 })
  return payload
}
