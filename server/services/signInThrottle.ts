/**
 * Sign-in throttling with progressive delays, per account and per address.
 * - Account: after 5 failed sign-ins (counted since its last successful one, within 15 minutes),
 *   each further attempt must wait 1 s after the latest failure, then 2, 4, 8 ... up to 60 s.
 * - Address: the same from 20 failures within 15 minutes, whatever the accounts (a success does
 *   not reset it, or one valid account would let an address keep guessing others).
 * An attempt made during the wait is refused without checking the password and is not counted.
 * The counters are the rows of sign_in_attempts in PostgreSQL rather than process memory: every
 * server process sees the same counts, a restart does not clear them, and the rows double as the
 * record of who tried to sign in from where. Each check is two small indexed queries.
 */
import { and, count, desc, eq, gt, max } from 'drizzle-orm'
import { signInAttempts } from '~~/db/schema'
import type { Db } from '../utils/db'

export const THROTTLE = { windowMinutes: 15, perAccount: 5, perAddress: 20, firstDelaySeconds: 1, maxDelaySeconds: 60 } as const

/** Seconds to wait after the latest failure, given the failures counted and the free allowance (pure). */
export function delaySeconds(failures: number, allowance: number): number {
  if (failures < allowance) return 0
  return Math.min(THROTTLE.maxDelaySeconds, THROTTLE.firstDelaySeconds * 2 ** (failures - allowance))
}

/** How long from `now` until the next attempt may be made (0 = now), for one counter (pure). */
export function waitSeconds(failures: number, latest: Date | null, allowance: number, now = new Date()): number {
  if (!latest) return 0
  const until = latest.getTime() + delaySeconds(failures, allowance) * 1000
  return Math.max(0, Math.ceil((until - now.getTime()) / 1000))
}

export interface ThrottleVerdict { retryAfter: number, message: string }

async function failuresSince(db: Db, where: ReturnType<typeof and>) {
  const [row] = await db.select({ n: count(), latest: max(signInAttempts.at) }).from(signInAttempts).where(where)
  return { n: Number(row?.n ?? 0), latest: row?.latest ? new Date(row.latest) : null }
}

/** null when the attempt may go ahead, else how long to wait and a message saying so. */
export async function throttleVerdict(db: Db, email: string, ip: string, now = new Date()): Promise<ThrottleVerdict | null> {
  const windowStart = new Date(now.getTime() - THROTTLE.windowMinutes * 60_000)
  const [lastSuccess] = await db.select({ at: signInAttempts.at }).from(signInAttempts)
    .where(and(eq(signInAttempts.email, email), eq(signInAttempts.success, true), gt(signInAttempts.at, windowStart)))
    .orderBy(desc(signInAttempts.at)).limit(1)
  const accountFrom = lastSuccess && lastSuccess.at > windowStart ? lastSuccess.at : windowStart
  const [account, address] = await Promise.all([
    failuresSince(db, and(eq(signInAttempts.email, email), eq(signInAttempts.success, false), gt(signInAttempts.at, accountFrom))),
    failuresSince(db, and(eq(signInAttempts.ip, ip), eq(signInAttempts.success, false), gt(signInAttempts.at, windowStart))),
  ])
  const byAccount = waitSeconds(account.n, account.latest, THROTTLE.perAccount, now)
  const byAddress = waitSeconds(address.n, address.latest, THROTTLE.perAddress, now)
  const retryAfter = Math.max(byAccount, byAddress)
  if (!retryAfter) return null
  const what = byAccount >= byAddress ? 'for this account' : 'from this address'
  return {
    retryAfter,
    message: `Too many failed sign-ins ${what}. Try again in ${retryAfter} second${retryAfter === 1 ? '' : 's'}; the wait grows with each further failure (up to a minute). If you have forgotten your password, ask an administrator to reset it.`,
  }
}

export async function recordAttempt(db: Db, email: string, ip: string, success: boolean): Promise<void> {
  await db.insert(signInAttempts).values({ email, ip, success })
}
