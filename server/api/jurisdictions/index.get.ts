/** GET /api/jurisdictions — any signed-in user: every jurisdiction with attributes and neighbour codes. */
import { listJurisdictions } from '../../services/registry/jurisdictions'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  return listJurisdictions(useDb())
})
