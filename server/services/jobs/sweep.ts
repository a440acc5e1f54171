/**
 * Fails running jobs whose process has died: silent for STALE_SECONDS (no heartbeat) and
 * with nobody holding their liveness lock (./liveness.ts). Every live process (web and
 * worker) sweeps every SWEEP_MS; the UPDATE hands each dead job to exactly one sweeper,
 * which then runs the job kind's `abandoned` hook (e.g. the import marks its release failed
 * so the same file can be uploaded again).
 */
import type { JobDefinition } from '../../utils/jobs'
import { lockHeldSql } from './liveness'

export const STALE_SECONDS = 10
export const SWEEP_MS = 3_000
export const DIED_MESSAGE = 'The job stopped because the process running it ended; nothing it was doing was kept. Start it again.'

export async function sweepDeadJobs(definitionOf: (kind: string) => JobDefinition<any> | undefined): Promise<number> {
  const { rows } = await usePool().query<{ id: string, kind: string, result: Record<string, unknown> | null }>(
    `UPDATE jobs j SET state = 'failed', message = $1, updated_at = now()
     WHERE j.state = 'running' AND j.updated_at < now() - make_interval(secs => $2) AND NOT ${lockHeldSql('j.id')}
     RETURNING j.id, j.kind, j.result`, [DIED_MESSAGE, STALE_SECONDS])
  for (const job of rows) {
    await definitionOf(job.kind)?.abandoned?.(job.id, job.result, 'died')
      .catch(e => console.error('[jobs] clean-up of', job.id, e))
  }
  return rows.length
}

