/** POST /api/users — admin: create an account with a password. Returns the new user. */
import bcrypt from 'bcryptjs'
import { eq } from 'drizzle-orm'
import { users } from '~~/db/schema'
import { userCreateSchema } from '#shared/schemas/users'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const body = await readValidatedBody(event, check(userCreateSchema))
  const db = useDb()
  const [existing] = await db.select({ id: users.id }).from(users).where(eq(users.email, body.email))
  if (existing) throw createError({ statusCode: 409, message: `An account for ${body.email} already exists.` })
  const passwordHash = await bcrypt.hash(body.password, 10)
  return db.transaction(async (tx) => {
    const [user] = await tx.insert(users).values({ email: body.email, name: body.name, role: body.role, passwordHash })
      .returning({ id: users.id, email: users.email, name: users.name, role: users.role, active: users.active })
    await audit(tx, { userId: admin.id, action: 'create', entity: 'user', entityId: user!.id, after: user })
    setResponseStatus(event, 201)
    return user
  })
})
