/**
 * The exact rows a stored run used, read again: the run keeps the measures, units, period
 * range and transform it read (study_runs.data.source) and the release ids the rows came
 * from; reading those releases only gives the same rows, which are checked against the
 * run's fingerprint. For the workbook and anything else that must show a run's data.
 *
 *   loadRunRows(studyId, runId) -> { run, study, rows, pool }
 *     rows: [{ jurisdiction, period, values: { outcome, <covariate key>: number | null } }]
 *     pool: the candidates as they stood when the run was made (scores, flags, decisions)
 *   Throws 404 (the study has no such run: a run of another study is not found) and 409 (the
 *   data no longer match the fingerprint, e.g. a release the run used was removed).
 */
import { and, eq } from 'drizzle-orm'
import { studies, studyRuns, type Study, type StudyRun } from '~~/db/schema'
import type { PoolRow } from '#shared/schemas/studies'
import { fingerprintRows, type StudyRow } from './fingerprint'
import { readStudyRows } from './rows'

export { fingerprintRows, canonicalJson, type StudyRow } from './fingerprint'

export async function loadRunRows(studyId: number, runId: number): Promise<{ run: StudyRun, study: Study, rows: StudyRow[], pool: PoolRow[] }> {
  const db = useDb()
  const [found] = await db.select({ run: studyRuns, study: studies }).from(studyRuns)
    .innerJoin(studies, eq(studies.id, studyRuns.studyId))
    .where(and(eq(studyRuns.id, runId), eq(studyRuns.studyId, studyId)))
  if (!found) throw createError({ statusCode: 404, message: `Study ${studyId} has no run ${runId}.` })
  const { run, study } = found
  const { rows } = await readStudyRows(run.data.source, run.releaseIds)
  const fingerprint = fingerprintRows(rows, run.spec)
  if (fingerprint !== run.fingerprint) {
    throw createError({
      statusCode: 409,
      message: `The data behind run #${run.id} can no longer be read exactly as it was (its fingerprint no longer matches): a release it used may have been removed.`,
    })
  }
  return { run, study, rows, pool: run.data.pool ?? [] }
}
