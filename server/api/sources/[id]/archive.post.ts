/** POST /api/sources/:id/archive {archived} — admin: archive a source (hidden from pickers; its releases stay) or bring it back. Audit-logged. */
import { archiveSchema } from '#shared/schemas/archive'
import { idParamSchema } from '#shared/schemas/registry'
import { setArchived } from '../../../services/registry/archive'

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const { id } = await getValidatedRouterParams(event, check(idParamSchema, 'path'))
  const { archived } = await readValidatedBody(event, check(archiveSchema))
  return setArchived(useDb(), admin.id, 'source', id, archived)
})
