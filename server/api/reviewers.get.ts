/** GET /api/reviewers — any signed-in user: the active reviewers a study can be sent to ({id, name, email}). */
import { listReviewers } from '../services/review'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  return listReviewers()
})
