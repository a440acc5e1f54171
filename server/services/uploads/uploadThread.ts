/**
 * Entry of the upload thread: runs checkUpload() on the request in workerData and posts the
 * result back, so a large or hostile file is parsed away from the server's event loop (and
 * within the thread's own memory limit). Bundled on its own at build time (server/build/threadBundle.ts).
 */
import { parentPort, workerData } from 'node:worker_threads'
import { checkUpload, type CheckRequest } from './checkUpload'

if (parentPort && workerData?.kind === 'counterpart-upload-check') {
  const port = parentPort
  checkUpload(workerData.request as CheckRequest).then(
    result => port.postMessage({ result }),
    (e: Error) => port.postMessage({ crash: e?.message ?? String(e) }),
  )
}
