/**
 * POST /api/studies/:id/review — {action: request|approve|return, note?, reviewerId (request)}.
 * request: the owner analyst or an admin, on a draft (the reviewer is mailed a link);
 * approve / return: reviewers only, on a study in review (approve locks it; the owner is
 * mailed the outcome). Returns {study, mail: {to, sent, error}}.
 */
import { idParamSchema } from '#shared/schemas/users'
import { reviewActionSchema } from '#shared/schemas/review'
import { applyReview } from '../../../services/review'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, check(idParamSchema, 'path'))
  const body = await readValidatedBody(event, check(reviewActionSchema))
  return applyReview(user, id, body)
})
