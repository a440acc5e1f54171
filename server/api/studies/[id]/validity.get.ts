/** GET /api/studies/:id/validity — any signed-in user: every threat with its assessment, note and evidence (null assessment = not recorded yet). */
import { idParamSchema } from '#shared/schemas/users'
import { readValidity } from '../../../services/validity'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(idParamSchema, 'path'))
  await requireStudy(event, id, 'read')
  return { threats: await readValidity(useDb(), id) }
})
