/**
 * POST /api/studies/:id/versions — the owner analyst or an admin: starts a new draft version
 * of a locked (approved) study, copying its setup, pool decisions and validity record.
 * 201 with the new study; 409 when the study is not locked or already has a next version.
 */
import { idParamSchema } from '#shared/schemas/users'
import { createVersion } from '../../../services/review'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(idParamSchema, 'path'))
  const { user, study } = await requireStudy(event, id, 'version')
  setResponseStatus(event, 201)
  return createVersion(user, study)
})
