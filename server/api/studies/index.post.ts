/**
 * POST /api/studies — analyst or admin: create a study {title, question?, outcome, transform?,
 * denominator?, treated, start, interventions?, window?, covariates?}. Field-level 400s;
 * unknown measures or jurisdictions are named. Returns the study (201), owned by the caller.
 */
import { studyCreateSchema } from '#shared/schemas/studies'
import { createStudy } from '../../services/studies/studies'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event, WRITERS)
  const body = await readValidatedBody(event, check(studyCreateSchema))
  const study = await createStudy(user, body)
  setResponseStatus(event, 201)
  return study
})
