/** GET /api/measures?archived=include|only — any signed-in user: (archived ones hidden unless asked for) every measure (key, label, unit, kind, frequency). */
import { registryListQuerySchema } from '#shared/schemas/archive'
import { listMeasures } from '../../services/registry/measures'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const query = await getValidatedQuery(event, check(registryListQuerySchema, 'query'))
  return listMeasures(useDb(), query)
})
