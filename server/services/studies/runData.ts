/**
 * The exact rows a stored run used, read again: the run keeps the measures, units, period
 * range and transform it read (study_runs.data.source) and the release ids the rows came
 * from; reading those releases only gives the same rows, which are checked against the
 * run's fingerprint. For the workbook and anything else that must show a run's data.
 *
 *   loadRunRows(runId) -> { run, study, rows, pool }
 *     rows: [{ jurisdiction, period, values: { outcome, <covariate key>: number | null } }]
 *     pool: the candidates as they stood when the run was made (scores, flags, decisions)
 *   Throws 404 (no such run) and 409 (the data no longer match the fingerprint, e.g. a
 *   release the run used was removed).
 */
import { eq } from 'drizzle-orm'
import { studies, studyRuns } from '~~/db/schema'
import { fingerprintRows, type StudyRow } from './fingerprint'
import { readStudyRows, type RowSource } from './rows'
import type { PoolRow } from './candidates'

export { fingerprintRows, canonicalJson, type StudyRow } from './fingerprint'

export type Run = typeof studyRuns.$inferSelect
export type StudyRecord = typeof studies.$inferSelect

/** What a run stores in study_runs.data. */
export interface RunData {
  source: RowSource
  frequency: string
  releases: { id: number, source: string, label: string | null, importedAt: string | null }[]
  pool: PoolRow[]
}

export async function loadRunRows(runId: number): Promise<{ run: Run, study: StudyRecord, rows: StudyRow[], pool: PoolRow[] }> {
  const db = useDb()
  const [run] = await db.select().from(studyRuns).where(eq(studyRuns.id, runId))
  if (!run) throw createError({ statusCode: 404, message: `No run with id ${runId}.` })
  const [study] = await db.select().from(studies).where(eq(studies.id, run.studyId))
  const data = run.data as unknown as RunData
  const { rows } = await readStudyRows(data.source, run.releaseIds)
  const fingerprint = fingerprintRows(rows, run.spec)
  if (fingerprint !== run.fingerprint) {
    throw createError({
      statusCode: 409,
      message: `The data behind run #${run.id} can no longer be read exactly as it was (its fingerprint no longer matches): a release it used may have been removed.`,
    })
  }
  return { run, study: study!, rows, pool: data.pool ?? [] }
}
