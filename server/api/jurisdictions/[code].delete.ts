/** DELETE /api/jurisdictions/:code — admin: remove a jurisdiction no observation or policy event refers to (409 otherwise). */
import { codeParamSchema } from '#shared/schemas/registry'
import { deleteJurisdiction } from '../../services/registry/jurisdictions'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const { code } = await getValidatedRouterParams(event, check(codeParamSchema, 'path'))
  return deleteJurisdiction(useDb(), admin.id, code)
})
