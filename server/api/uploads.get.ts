/** GET /api/uploads — any signed-in user: what uploads accept (size limit, formats, delimiters). */
import { DELIMITERS } from '#shared/schemas/uploads'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  return { limitBytes: uploadLimitBytes(), limit: formatBytes(uploadLimitBytes()), formats: ['csv', 'xlsx'], delimiters: DELIMITERS }
})
