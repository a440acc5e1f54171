/** GET /api/jurisdictions?archived=include|only — any signed-in user: (archived ones hidden unless asked for) every jurisdiction with attributes and neighbour codes. */
import { registryListQuerySchema } from '#shared/schemas/archive'
import { listJurisdictions } from '../../services/registry/jurisdictions'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const query = await getValidatedQuery(event, check(registryListQuerySchema, 'query'))
  return listJurisdictions(useDb(), query)
})
