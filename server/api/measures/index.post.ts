/** POST /api/measures — admin: add a measure {key, label, unit, kind, frequency}. Returns it (201). */
import { measureCreateSchema } from '#shared/schemas/registry'
import { createMeasure } from '../../services/registry/measures'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const body = await readValidatedBody(event, check(measureCreateSchema))
  const created = await createMeasure(useDb(), admin.id, body)
  setResponseStatus(event, 201)
  return created
})
