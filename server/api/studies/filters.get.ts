/** GET /api/studies/filters — any signed-in user: the owners and outcomes that occur among the studies (the list's filter choices). */
import { studyFilterOptions } from '../../services/studies/studies'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  return studyFilterOptions()
})
