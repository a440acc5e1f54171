/**
 * Entry of an engine thread (one of the pool in server/utils/enginePool.ts): answers each
 * { id, task } message with { id, value } or { id, error }, one at a time, so long estimates
 * run away from the web process's event loop. An engine refusal travels as its code, message
 * and issues and is thrown again as an EngineError on the other side. Bundled on its own at
 * build time (server/build/threadBundle.ts): starting it never loads the server.
 */
import { parentPort, workerData } from 'node:worker_threads'
import { isEngineError } from '../../engine'
import { runEngineTask, type EngineTask } from './tasks'

if (parentPort && workerData?.kind === 'counterpart-engine') {
  const port = parentPort
  port.on('message', ({ id, task }: { id: number, task: EngineTask }) => {
    try {
      port.postMessage({ id, value: runEngineTask(task) })
    }
    catch (e) {
      const error = isEngineError(e)
        ? { engine: true, code: e.code, message: e.message, issues: e.issues }
        : { engine: false, message: (e as Error)?.message ?? String(e), stack: (e as Error)?.stack }
      port.postMessage({ id, error })
    }
  })
}
