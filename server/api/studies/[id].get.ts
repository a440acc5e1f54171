/** GET /api/studies/:id — any signed-in user: the study, owner, names of its units and measures, and whether the caller may edit it. */
import { studyIdParamSchema } from '#shared/schemas/studies'
import { getStudy } from '../../services/studies/studies'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(studyIdParamSchema, 'path'))
  const { user, study } = await requireStudy(event, id, 'read')
  return getStudy(study, user)
})
