/** The finished robustness checks of one run, newest first, for the workbook and the report. */
import { and, desc, eq } from 'drizzle-orm'
import { robustnessRuns } from '~~/db/schema'
import type { RobustnessKind, RobustnessResult } from '#shared/engine/robustness'

export async function robustnessForRun(runId: number) {
  const rows = await useDb().select({ id: robustnessRuns.id, kind: robustnessRuns.kind, fingerprint: robustnessRuns.fingerprint, createdAt: robustnessRuns.createdAt, result: robustnessRuns.result })
    .from(robustnessRuns).where(and(eq(robustnessRuns.runId, runId), eq(robustnessRuns.status, 'done'))).orderBy(desc(robustnessRuns.id))
  return rows.filter(r => r.result).map(r => ({ ...r, kind: r.kind as RobustnessKind, result: r.result as unknown as RobustnessResult }))
}
