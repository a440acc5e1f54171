/**
 * Runs checkUpload() in the upload thread (a worker thread with its own memory ceiling and a
 * time limit), at most PARSE_THREADS at once, so no file can stall the server: health checks
 * and other requests are answered while it is read. Where the thread bundle does not exist
 * (tests and scripts run from source), the check runs in-process.
 */
import { Worker } from 'node:worker_threads'
import { checkUpload, type CheckRequest, type CheckResult } from './checkUpload'
import { PARSE_HEAP_MB, PARSE_TIMEOUT_MS } from './limits'

const PARSE_THREADS = 2
let running = 0
const waiting: (() => void)[] = []

async function slot(): Promise<() => void> {
  if (running >= PARSE_THREADS) await new Promise<void>(resolve => waiting.push(resolve))
  running++
  return () => {
    running--
    waiting.shift()?.()
  }
}

let threadUrl: Promise<URL | null> | undefined
function findThread(): Promise<URL | null> {
  threadUrl ??= import('#upload-thread').then(m => new URL(m.default), () => null)
  return threadUrl
}

function refusal(statusCode: number, message: string, problem: string): CheckResult {
  return { ok: false, statusCode, message, problems: [{ row: null, column: null, problem }] }
}

function inThread(url: URL, request: CheckRequest): Promise<CheckResult> {
  return new Promise((resolve, reject) => {
    const worker = new Worker(url, {
      workerData: { kind: 'counterpart-upload-check', request },
      resourceLimits: { maxOldGenerationSizeMb: PARSE_HEAP_MB, maxYoungGenerationSizeMb: 64 },
      stdout: false,
      stderr: false,
    })
    let settled = false
    const settle = (fn: () => void) => {
      if (settled) return
      settled = true
      clearTimeout(timer)
      fn()
      void worker.terminate()
    }
    const timer = setTimeout(() => settle(() => resolve(refusal(413,
      `Reading the file took longer than ${PARSE_TIMEOUT_MS / 1000} s and was stopped; split it (by years or by measures) and upload the parts one after another.`,
      'Took too long to read.'))), PARSE_TIMEOUT_MS)
    worker.once('message', (m: { result?: CheckResult, crash?: string }) => settle(() => (m.result ? resolve(m.result) : reject(new Error(`The upload check failed: ${m.crash}`)))))
    worker.once('error', (e: Error & { code?: string }) => settle(() => (e.code === 'ERR_WORKER_OUT_OF_MEMORY'
      ? resolve(refusal(413, `Reading the file needs more than the ${PARSE_HEAP_MB} MB of memory an upload may use; split it (by years or by measures) and upload the parts one after another.`, 'Needs too much memory to read.'))
      : reject(e))))
    worker.once('exit', code => settle(() => reject(new Error(`The upload check stopped (exit code ${code}).`))))
  })
}

export async function runUploadCheck(request: CheckRequest): Promise<CheckResult> {
  const url = await findThread()
  if (!url) return checkUpload(request)
  const release = await slot()
  try {
    return await inThread(url, request)
  }
  finally {
    release()
  }
}
