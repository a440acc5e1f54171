/** POST /api/sources — admin: add a source {name, publisher, url?, licence?, notes?}. Returns it with its id (201). */
import { sourceCreateSchema } from '#shared/schemas/registry'
import { createSource } from '../../services/registry/sources'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const body = await readValidatedBody(event, check(sourceCreateSchema))
  const created = await createSource(useDb(), admin.id, body)
  setResponseStatus(event, 201)
  return created
})
