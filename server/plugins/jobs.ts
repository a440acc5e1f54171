/**
 * Starts the background-job worker in this server process (pg-boss on DATABASE_URL) and
 * registers the job kinds. Not awaited by Nitro: startJobs() keeps its promise for senders.
 */
import { importRelease, markReleaseFailed } from '../services/uploads/importRelease'
import { IMPORT_JOB } from '../services/uploads/submit'

export default defineNitroPlugin((nitroApp) => {
  if (import.meta.prerender) return
  defineJob<{ releaseId: number }>(IMPORT_JOB, {
    run: ({ releaseId }, job) => importRelease(usePool(), releaseId, job.progress),
    async abandoned(_jobId, initial) {
      const releaseId = Number(initial?.releaseId)
      if (releaseId) await markReleaseFailed(usePool(), releaseId, [{ row: null, column: null, problem: 'The import stopped before it finished (its server process ended); nothing was imported. Upload the file again.' }])
    },
  })
  startJobs().catch(e => console.error('[jobs] could not start the job queue:', e.message))
  sweepAbandonedJobs().catch(() => {})
  const sweep = setInterval(() => sweepAbandonedJobs().catch(() => {}), 60_000)
  sweep.unref()
  nitroApp.hooks.hook('close', async () => {
    clearInterval(sweep)
    await stopJobs()
  })
})
