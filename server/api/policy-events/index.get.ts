/** GET /api/policy-events?jurisdiction=CODE&policy=KEY — any signed-in user: policy events, by policy and period. */
import { policyEventQuerySchema } from '#shared/schemas/registry'
import { listPolicyEvents } from '../../services/registry/policyEvents'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const query = await getValidatedQuery(event, check(policyEventQuerySchema, 'query'))
  return listPolicyEvents(useDb(), query)
})
