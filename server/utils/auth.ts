/**
 * Access rules used by every route: `requireUser(event, roles?)` returns the signed-in,
 * active user or throws 401 (no session) / 403 (role not allowed).
 */
import type { H3Event } from 'h3'
import { eq } from 'drizzle-orm'
import { getServerSession } from '#auth'
import { users, type Role, type User } from '~~/db/schema'

export type SessionUser = Pick<User, 'id' | 'email' | 'name' | 'role'>

export async function requireUser(event: H3Event, roles?: readonly Role[]): Promise<SessionUser> {
  const email = await sessionEmail(event)
  const [user] = await useDb()
    .select({ id: users.id, email: users.email, name: users.name, role: users.role, active: users.active })
    .from(users)
    .where(eq(users.email, email))
  return activeUser(user, roles)
}

/** The signed-in email, or 401. */
export async function sessionEmail(event: H3Event): Promise<string> {
  const session = await getServerSession(event)
  const email = session?.user?.email
  if (!email) {
    throw createError({ statusCode: 401, statusMessage: 'Unauthorized', message: 'Sign in first.' })
  }
  return email
}

/** The session's account as read from users: 401 when missing or inactive, 403 when its role is not among `roles`. */
export function activeUser(user: (SessionUser & { active: boolean }) | undefined, roles?: readonly Role[]): SessionUser {
  if (!user || !user.active) {
    throw createError({ statusCode: 401, statusMessage: 'Unauthorized', message: 'This account is not active. Sign in again.' })
  }
  if (roles && !roles.includes(user.role)) {
    throw createError({
      statusCode: 403,
      statusMessage: 'Forbidden',
      message: `This needs the ${roles.join(' or ')} role; you are signed in as ${user.role}.`,
    })
  }
  return { id: user.id, email: user.email, name: user.name, role: user.role }
}

/** Roles that may write study and data content (reviewers only read and comment). */
export const WRITERS = ['admin', 'analyst'] as const satisfies readonly Role[]
export const ADMIN = ['admin'] as const satisfies readonly Role[]
