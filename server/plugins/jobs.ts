/**
 * Registers the job kinds and starts the job system in every server process: a web process
 * only sends jobs and sweeps; a worker (or all-in-one) process also consumes them
 * (COUNTERPART_ROLE, see server/utils/processRole.ts). Not awaited by Nitro: startJobs()
 * keeps its promise for senders.
 */
import { importRelease, markReleaseFailed } from '../services/uploads/importRelease'
import { IMPORT_JOB } from '../services/uploads/submit'
import { TEST_SLEEP_JOB, testSleep, type TestSleepData } from '../services/jobs/testJobs'

const IMPORT_STOPPED = {
  died: 'The import stopped before it finished (the process running it ended); nothing was imported. Upload the file again.',
  cancelled: 'The import was cancelled before it started; nothing was imported.',
}

export default defineNitroPlugin((nitroApp) => {
  if (import.meta.prerender) return
  processRole() // refuses a misspelt COUNTERPART_ROLE at start-up
  defineJob<{ releaseId: number }>(IMPORT_JOB, {
    run: ({ releaseId }, job) => importRelease(usePool(), releaseId, job.progress),
    async abandoned(_jobId, initial, reason) {
      const releaseId = Number(initial?.releaseId)
      if (releaseId) await markReleaseFailed(usePool(), releaseId, [{ row: null, column: null, problem: IMPORT_STOPPED[reason] }])
    },
  })
  if (process.env.COUNTERPART_TEST_JOBS === '1') defineJob<TestSleepData>(TEST_SLEEP_JOB, { run: testSleep })
  startJobs().catch(e => console.error('[jobs] could not start the job queue:', e.message))
  nitroApp.hooks.hook('close', async () => {
    await stopJobs()
  })
})
