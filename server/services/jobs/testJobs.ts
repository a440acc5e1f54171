/**
 * Job kinds for the job-system tests only (registered when COUNTERPART_TEST_JOBS=1):
 * 'test-sleep' reports progress `steps` times, `stepMs` apart, and returns which process ran
 * it; with `record`, each start is written to the table test_job_runs the test created, so
 * a test can count how many times a job ran.
 */
import type { JobContext } from '../../utils/jobs'

export const TEST_SLEEP_JOB = 'test-sleep'

export interface TestSleepData { steps?: number, stepMs?: number, record?: boolean }

export async function testSleep(data: TestSleepData, job: JobContext) {
  const steps = Math.max(1, Math.min(10_000, Math.floor(data.steps ?? 10)))
  const stepMs = Math.max(0, Math.min(60_000, data.stepMs ?? 100))
  const runner = runnerName()
  if (data.record) await usePool().query('INSERT INTO test_job_runs (job_id, runner) VALUES ($1, $2)', [job.jobId, runner])
  for (let i = 1; i <= steps; i++) {
    await new Promise(r => setTimeout(r, stepMs))
    await job.progress(i / steps, `Step ${i} of ${steps}`)
  }
  return { runner, steps }
}
