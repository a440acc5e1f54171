/**
 * Accounts, for the admin routes: list, create with a password, change name, role or status.
 * Every change is audited in the same transaction; an admin cannot lock themself out.
 */
import bcrypt from 'bcryptjs'
import { asc, eq } from 'drizzle-orm'
import type { z } from 'zod'
import { users } from '~~/db/schema'
import type { userCreateSchema, userPatchSchema } from '#shared/schemas/users'
import type { SessionUser } from '../utils/auth'

type UserCreate = z.output<typeof userCreateSchema>
type UserPatch = z.output<typeof userPatchSchema>

/** What the routes show of an account (never the password hash). */
const shown = { id: users.id, email: users.email, name: users.name, role: users.role, active: users.active }

/** Every account with role and status, by e-mail. */
export function listUsers() {
  return useDb().select({ ...shown, createdAt: users.createdAt }).from(users).orderBy(asc(users.email))
}

/** Refuses (409) an e-mail address that already has an account. */
export async function refuseTakenEmail(email: string): Promise<void> {
  const [existing] = await useDb().select({ id: users.id }).from(users).where(eq(users.email, email))
  if (existing) throw createError({ statusCode: 409, message: `An account for ${email} already exists.` })
}

export async function createUser(admin: SessionUser, body: UserCreate) {
  await refuseTakenEmail(body.email)
  const passwordHash = await bcrypt.hash(body.password, 10)
  return useDb().transaction(async (tx) => {
    const [user] = await tx.insert(users).values({ email: body.email, name: body.name, role: body.role, passwordHash }).returning(shown)
    await audit(tx, { userId: admin.id, action: 'create', entity: 'user', entityId: user!.id, after: user })
    return user!
  })
}

export async function updateUser(admin: SessionUser, id: number, body: UserPatch) {
  if (id === admin.id && (body.active === false || (body.role && body.role !== 'admin'))) {
    throw createError({ statusCode: 409, message: 'You cannot deactivate your own account or remove your own admin role.' })
  }
  return useDb().transaction(async (tx) => {
    const [before] = await tx.select(shown).from(users).where(eq(users.id, id))
    if (!before) throw createError({ statusCode: 404, message: `No user with id ${id}.` })
    const [after] = await tx.update(users).set(body).where(eq(users.id, id)).returning(shown)
    await audit(tx, { userId: admin.id, action: 'update', entity: 'user', entityId: id, before, after })
    return after!
  })
}
