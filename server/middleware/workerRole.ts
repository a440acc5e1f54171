/**
 * A worker process (COUNTERPART_ROLE=worker) serves nothing: GET /_worker/health answers
 * {role, runner, uptimeSeconds, consumes}, and every other request gets a 404. The worker
 * listens on a unix socket or loopback port of its own (scripts/worker.sh), never the app's.
 */
export default defineEventHandler((event) => {
  if (processRole() !== 'worker') return
  if (event.path === '/_worker/health' && event.method === 'GET') {
    return { role: 'worker', runner: runnerName(), uptimeSeconds: Math.round(process.uptime()), consumes: consumedKinds() }
  }
  throw createError({ statusCode: 404, message: 'This is a Counterpart worker process: it runs background jobs and serves no pages.' })
})
