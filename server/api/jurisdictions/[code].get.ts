/** GET /api/jurisdictions/:code — any signed-in user: one jurisdiction with neighbours and its policy events. */
import { codeParamSchema } from '#shared/schemas/registry'
import { getJurisdiction } from '../../services/registry/jurisdictions'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const { code } = await getValidatedRouterParams(event, check(codeParamSchema, 'path'))
  return getJurisdiction(useDb(), code)
})
