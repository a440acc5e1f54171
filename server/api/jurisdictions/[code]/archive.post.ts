/** POST /api/jurisdictions/:code/archive {archived} — admin: archive a jurisdiction (hidden from pickers and new studies' candidates) or bring it back. Audit-logged. */
import { archiveSchema } from '#shared/schemas/archive'
import { codeParamSchema } from '#shared/schemas/registry'
import { setArchived } from '../../../services/registry/archive'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const { code } = await getValidatedRouterParams(event, check(codeParamSchema, 'path'))
  const { archived } = await readValidatedBody(event, check(archiveSchema))
  return setArchived(useDb(), admin.id, 'jurisdiction', code, archived)
})
