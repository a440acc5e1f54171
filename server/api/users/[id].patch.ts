/** PATCH /api/users/:id — admin: change name, role, or deactivate/reactivate. An admin cannot lock themself out. */
import { eq } from 'drizzle-orm'
import { users } from '~~/db/schema'
import { idParamSchema, userPatchSchema } from '#shared/schemas/users'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const { id } = await getValidatedRouterParams(event, check(idParamSchema, 'path'))
  const body = await readValidatedBody(event, check(userPatchSchema))
  if (id === admin.id && (body.active === false || (body.role && body.role !== 'admin'))) {
    throw createError({ statusCode: 409, message: 'You cannot deactivate your own account or remove your own admin role.' })
  }
  const db = useDb()
  return db.transaction(async (tx) => {
    const cols = { id: users.id, email: users.email, name: users.name, role: users.role, active: users.active }
    const [before] = await tx.select(cols).from(users).where(eq(users.id, id))
    if (!before) throw createError({ statusCode: 404, message: `No user with id ${id}.` })
    const [after] = await tx.update(users).set(body).where(eq(users.id, id)).returning(cols)
    await audit(tx, { userId: admin.id, action: 'update', entity: 'user', entityId: id, before, after })
    return after
  })
})
