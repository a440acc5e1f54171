/**
 * Registers the robustness job kind with the background-job worker (server/utils/jobs.ts;
 * the worker itself is started by plugins/jobs.ts).
 */
import { markRobustnessAbandoned, ROBUSTNESS_JOB, runRobustnessJob } from '../services/robustness/job'

export default defineNitroPlugin(() => {
  if (import.meta.prerender) return
  defineJob<{ robustnessId: number }>(ROBUSTNESS_JOB, {
    run: ({ robustnessId }, job) => runRobustnessJob(robustnessId, job),
    abandoned: (_jobId, initial) => markRobustnessAbandoned(initial),
  })
})
