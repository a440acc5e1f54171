/** GET /api/sources — any signed-in user: every source with its number of imported releases. */
import { listSources } from '../../services/registry/sources'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  return listSources(useDb())
})
