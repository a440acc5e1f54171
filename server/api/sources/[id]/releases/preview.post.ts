/**
 * POST /api/sources/:id/releases/preview — analyst or admin: multipart `file` (and optional
 * `mapping`, `delimiter`, `sheet`). Returns the columns, the first 20 rows, a suggested
 * mapping and, with a mapping, every problem the import would report. Writes nothing.
 */
import { idParamSchema } from '#shared/schemas/registry'
import { previewRelease } from '../../../../services/uploads/submit'

export default defineEventHandler(async (event) => {
  await requireUser(event, WRITERS)
  const { id } = await getValidatedRouterParams(event, check(idParamSchema, 'path'))
  const upload = await readUpload(event)
  return previewRelease(id, upload)
})
