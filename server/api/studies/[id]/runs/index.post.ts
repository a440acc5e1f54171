/**
 * POST /api/studies/:id/runs {design, options?} — the owner or an admin: estimate on the
 * current data and pool, store the run (spec, data fingerprint, release ids, result) and
 * return {id, spec, fingerprint, result, createdAt, compare} (201). Engine refusals are 400.
 */
import { runCreateSchema, studyIdParamSchema } from '#shared/schemas/studies'
import { createRun } from '../../../../services/studies/runs'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(studyIdParamSchema, 'path'))
  const { user, study } = await requireStudy(event, id, 'write')
  const body = await readValidatedBody(event, check(runCreateSchema))
  const run = await createRun(study, user, body)
  setResponseStatus(event, 201)
  return run
})
