/**
 * PUT /api/studies/:id/validity — the owner analyst or an admin, on an unlocked study:
 * {notes: [{threat, assessment, note, evidence}]} records those threats (others stay).
 * Returns the whole record; 409 on a locked study.
 */
import { idParamSchema } from '#shared/schemas/users'
import { validityPutSchema } from '#shared/schemas/validity'
import { writeValidity } from '../../../services/validity'

export default defineEventHandler(async (event) => {
  const { id } = await getValidatedRouterParams(event, check(idParamSchema, 'path'))
  const { user } = await requireStudy(event, id, 'write')
  const body = await readValidatedBody(event, check(validityPutSchema))
  return { threats: await writeValidity(user, id, body) }
})
