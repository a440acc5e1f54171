/** PATCH /api/jurisdictions/:code — admin: change name, kind, region, attributes or the neighbour list (kept symmetric). */
import { codeParamSchema, jurisdictionPatchSchema } from '#shared/schemas/registry'
import { updateJurisdiction } from '../../services/registry/jurisdictions'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const { code } = await getValidatedRouterParams(event, check(codeParamSchema, 'path'))
  const body = await readValidatedBody(event, check(jurisdictionPatchSchema))
  return updateJurisdiction(useDb(), admin.id, code, body)
})
