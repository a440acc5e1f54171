/** GET /api/sources?archived=include|only — any signed-in user: (archived ones hidden unless asked for) every source with its number of imported releases. */
import { registryListQuerySchema } from '#shared/schemas/archive'
import { listSources } from '../../services/registry/sources'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const query = await getValidatedQuery(event, check(registryListQuerySchema, 'query'))
  return listSources(useDb(), query)
})
