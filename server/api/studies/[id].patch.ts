/**
 * PATCH /api/studies/:id — the owner (analyst) or an admin, while the study is not locked:
 * change any of the create fields, or set status draft|archived. Audit-logged. Returns the study.
 */
import { studyIdParamSchema, studyPatchSchema } from '#shared/schemas/studies'
import { getStudy, updateStudy } from '../../services/studies/studies'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(studyIdParamSchema, 'path'))
  const { user, study } = await requireStudy(event, id, 'write')
  const body = await readValidatedBody(event, check(studyPatchSchema))
  return getStudy(await updateStudy(study, user, body), user)
})
