/** POST /api/measures/:key/archive {archived} — admin: archive a measure (hidden from pickers and new studies) or bring it back. Audit-logged. */
import { z } from 'zod'
import { archiveSchema } from '#shared/schemas/archive'
import { measureKeySchema } from '#shared/schemas/registry'
import { setArchived } from '../../../services/registry/archive'

const params = z.object({ key: measureKeySchema })

export default defineEventHandler(async (event) => {
  const admin = await requireUser(event, ADMIN)
  const { key } = await getValidatedRouterParams(event, check(params, 'path'))
  const { archived } = await readValidatedBody(event, check(archiveSchema))
  return setArchived(useDb(), admin.id, 'measure', key, archived)
})
