/**
 * GET /api/studies/:id/candidates?k=10&maxMissing=0.2 — any signed-in user: every donor
 * candidate with its scores, ranks, weight in the weighted comparison, automatic exclusion
 * flags and pool decision, the suggested pool (unflagged, close in pre-period trend, then the
 * k best by demeaned fit; each with its reason) and the balance summary.
 */
import { candidatesQuerySchema, studyIdParamSchema } from '#shared/schemas/studies'
import { assemblePool, candidateContext, poolDecisions } from '../../../services/studies/candidates'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(studyIdParamSchema, 'path'))
  const { study } = await requireStudy(event, id, 'read')
  const { k, maxMissing } = await getValidatedQuery(event, check(candidatesQuerySchema, 'query'))
  const [ctx, decisions] = await Promise.all([candidateContext(study, maxMissing), poolDecisions(study.id)])
  return assemblePool(ctx, decisions, k)
})
