/**
 * Sign-in throttling: after too many failed attempts in a window, further attempts for that
 * account (or from that address) are refused until the window has passed.
 * Limits: 5 failures per account or 20 per address in 15 minutes.
 */
import { and, count, eq, gt } from 'drizzle-orm'
import { signInAttempts } from '~~/db/schema'
import type { Db } from '../utils/db'

export const THROTTLE = { windowMinutes: 15, perAccount: 5, perAddress: 20 } as const

export async function throttleMessage(db: Db, email: string, ip: string): Promise<string | null> {
  const since = new Date(Date.now() - THROTTLE.windowMinutes * 60_000)
  const failed = (col: typeof signInAttempts.email | typeof signInAttempts.ip, value: string) =>
    db.select({ n: count() }).from(signInAttempts)
      .where(and(eq(col, value), eq(signInAttempts.success, false), gt(signInAttempts.at, since)))
  const [[byAccount], [byAddress]] = await Promise.all([failed(signInAttempts.email, email), failed(signInAttempts.ip, ip)])
  if ((byAccount?.n ?? 0) >= THROTTLE.perAccount || (byAddress?.n ?? 0) >= THROTTLE.perAddress) {
    return `Too many failed sign-ins. Wait ${THROTTLE.windowMinutes} minutes and try again, or ask an administrator to reset your password.`
  }
  return null
}

export async function recordAttempt(db: Db, email: string, ip: string, success: boolean): Promise<void> {
  await db.insert(signInAttempts).values({ email, ip, success })
}
