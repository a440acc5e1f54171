/** GET /api/sources/:id — any signed-in user: the source's provenance and every release (newest first, without the file). */
import { idParamSchema } from '#shared/schemas/registry'
import { getSource } from '../../../services/registry/sources'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const { id } = await getValidatedRouterParams(event, check(idParamSchema, 'path'))
  return getSource(useDb(), id)
})
