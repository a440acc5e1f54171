/** POST /api/jurisdictions — admin: add a jurisdiction {code, name, kind, region?, attributes?, neighbours?}. Returns it (201). */
import { jurisdictionCreateSchema } from '#shared/schemas/registry'
import { createJurisdiction } from '../../services/registry/jurisdictions'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const body = await readValidatedBody(event, check(jurisdictionCreateSchema))
  const created = await createJurisdiction(useDb(), admin.id, body)
  setResponseStatus(event, 201)
  return created
})
