/**
 * What this server process does, from COUNTERPART_ROLE (one built bundle, two roles):
 *
 *   web     serves the app and the API; enqueues jobs and reports their progress, never runs them
 *   worker  runs jobs only (`npm run worker`): listens on a unix socket or loopback port of its
 *           own and answers nothing but GET /_worker/health (server/middleware/workerRole.ts)
 *   all     both in one process (the default, for `nuxt dev` and single-process set-ups)
 *
 * Why one bundle with roles rather than a separate worker program: job handlers use the same
 * services as the routes (usePool, useDb, the import and estimation services, runtime config),
 * so the worker is the built server with its HTTP surface switched off; there is one build to
 * ship, and a job computes exactly what the same code would compute in a request.
 */
import { hostname } from 'node:os'

export type ProcessRole = 'web' | 'worker' | 'all'
const ROLES: readonly ProcessRole[] = ['web', 'worker', 'all']

let role: ProcessRole | undefined

export function processRole(): ProcessRole {
  if (!role) {
    const raw = (process.env.COUNTERPART_ROLE || 'all').trim().toLowerCase()
    if (!ROLES.includes(raw as ProcessRole)) throw new Error(`COUNTERPART_ROLE must be web, worker or all, not "${raw}".`)
    role = raw as ProcessRole
  }
  return role
}

/** Whether this process takes jobs off the queue. */
export function runsJobs(): boolean {
  return processRole() !== 'web'
}

/** How a job row names the process running it: "host:pid role". */
export function runnerName(): string {
  return `${hostname()}:${process.pid} ${processRole()}`
}
