/**
 * POST /api/sources/:id/releases — analyst or admin: upload a release, multipart `file`
 * (CSV or XLSX), `mapping` (JSON, DESIGN.md "Payloads") and optional `label`.
 * Returns 202 {jobId, releaseId}; the import runs as a job (GET /api/jobs/:id).
 * 400 {message, data.errors: [{row, column, problem}]} for a bad file, 409 for a file
 * identical to a release already imported, 413 over the size limit; none of them writes anything.
 */
import { idParamSchema } from '#shared/schemas/registry'
import { submitRelease } from '../../../../services/uploads/submit'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event, WRITERS)
  const { id } = await getValidatedRouterParams(event, check(idParamSchema, 'path'))
  const upload = await readUpload(event)
  const queued = await submitRelease(user.id, id, upload)
  setResponseStatus(event, 202)
  return queued
})
