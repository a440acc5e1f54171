/** GET /api/measures — any signed-in user: every measure (key, label, unit, kind, frequency). */
import { listMeasures } from '../../services/registry/measures'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  return listMeasures(useDb())
})
