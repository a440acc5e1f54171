/**
 * PUT /api/studies/:id/pool {decisions: [{jurisdiction, included, reason?}]} — the owner or
 * an admin: save pool decisions (including a flagged candidate needs a reason). Audit-logged.
 * Returns the re-scored candidate table and summary, as GET candidates does.
 */
import { poolPutSchema, studyIdParamSchema } from '#shared/schemas/studies'
import { savePool } from '../../../services/studies/pool'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(studyIdParamSchema, 'path'))
  const { user, study } = await requireStudy(event, id, 'write')
  const body = await readValidatedBody(event, check(poolPutSchema))
  return savePool(study, user, body)
})
