/**
 * The secret that signs and encrypts session tokens. There is no default in the code: the built
 * server refuses to start without NUXT_AUTH_SECRET of at least 32 characters (scripts/start.sh
 * generates one and keeps it in .data/auth-secret). Only `nuxt dev` falls back to a random
 * secret made for the process, so sessions there end when it restarts.
 */
import { randomBytes } from 'node:crypto'

export const MIN_AUTH_SECRET_LENGTH = 32

/** Why this secret cannot be used, or null when it can. */
export function authSecretProblem(secret: string | undefined | null): string | null {
  if (!secret) return 'NUXT_AUTH_SECRET is not set.'
  if (secret.length < MIN_AUTH_SECRET_LENGTH) return `NUXT_AUTH_SECRET is ${secret.length} characters long; use at least ${MIN_AUTH_SECRET_LENGTH}.`
  return null
}

export const AUTH_SECRET_HINT = 'Generate one with `openssl rand -base64 48` and pass it as NUXT_AUTH_SECRET (npm start does this for you and keeps it in .data/auth-secret).'

let devSecret: string | undefined

export function authSecret(): string {
  const secret = String(useRuntimeConfig().authSecret || process.env.NUXT_AUTH_SECRET || '')
  const problem = authSecretProblem(secret)
  if (!problem) return secret
  if (!import.meta.dev) throw new Error(`Counterpart will not start: ${problem} ${AUTH_SECRET_HINT}`)
  if (!devSecret) {
    devSecret = randomBytes(48).toString('base64')
    console.warn(`[counterpart] ${problem} Using a random secret for this development process; sessions end when it restarts.`)
  }
  return devSecret
}
