/** POST /api/policy-events — admin: record {jurisdiction, period, kind, policy, label, notes?}. Returns it (201). */
import { policyEventCreateSchema } from '#shared/schemas/registry'
import { createPolicyEvent } from '../../services/registry/policyEvents'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const body = await readValidatedBody(event, check(policyEventCreateSchema))
  const created = await createPolicyEvent(useDb(), admin.id, body)
  setResponseStatus(event, 201)
  return created
})
