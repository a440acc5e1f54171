/**
 * The engine threads: estimates, donor scores and threat evidence asked for by a request run
 * in a small pool of worker threads (server/services/engineThread/entry.ts), so one long
 * estimate never holds up the other requests on the web process's event loop. The threads
 * call the very functions the web process would (engineThread/tasks.ts), on the same rows,
 * so the answers are the same.
 *
 *   engineTask(task)  the task's answer; an engine refusal comes back as an EngineError.
 *                     When every thread is busy the task waits in a queue of at most
 *                     ENGINE_QUEUE_PER_THREAD per thread; past that it is refused with a 503
 *                     and Retry-After, which the client may simply try again.
 *
 * Pool size: os.availableParallelism(), at least 1 and at most 4 (COUNTERPART_ENGINE_THREADS
 * overrides it). Threads start on first use; a thread that dies is replaced and its task
 * fails with a plain error. Where the thread bundle does not exist (tests and scripts run
 * from source), the task runs in-process through the same function.
 */
import { availableParallelism } from 'node:os'
import { Worker } from 'node:worker_threads'
import { EngineError, type EngineErrorCode } from '~~/server/engine/errors'
import { runEngineTask, type EngineAnswers, type EngineTask } from '~~/server/services/engineThread/tasks'
import { packRows, rowBuffers, type PackedRows } from '~~/server/services/engineThread/packedRows'

export const ENGINE_QUEUE_PER_THREAD = 32
export const ENGINE_RETRY_AFTER_S = 5

type ThreadError = { engine: true, code: EngineErrorCode, message: string, issues: string[] } | { engine: false, message: string, stack?: string }
type Reply = { id: number, value?: unknown, error?: ThreadError }
interface Pending { id: number, task: unknown, transfer: ArrayBuffer[], resolve: (v: unknown) => void, reject: (e: unknown) => void }

/** Refusal when the queue is full: 503 with the seconds to wait. */
export class EngineBusyError extends Error {
  readonly statusCode = 503
  readonly retryAfter = ENGINE_RETRY_AFTER_S
  constructor() {
    super(`The server is busy with other estimates; please try again in ${ENGINE_RETRY_AFTER_S} seconds.`)
    this.name = 'EngineBusyError'
  }
}

/** A fixed number of worker threads, one task each at a time, with a bounded queue. */
export class ThreadPool {
  private idle: Worker[] = []
  private busy = new Map<Worker, Pending>()
  private started = 0
  private queue: Pending[] = []
  private nextId = 1

  constructor(private readonly make: () => Worker, readonly size: number, readonly queueMax: number) {}

  get waiting(): number {
    return this.queue.length
  }

  run(task: unknown, transfer: ArrayBuffer[] = []): Promise<unknown> {
    if (!this.idle.length && this.started >= this.size && this.queue.length >= this.queueMax) return Promise.reject(new EngineBusyError())
    return new Promise((resolve, reject) => {
      this.queue.push({ id: this.nextId++, task, transfer, resolve, reject })
      this.pump()
    })
  }

  /** Ends every thread (tests; a process about to exit need not call it). */
  async close(): Promise<void> {
    const all = [...this.idle, ...this.busy.keys()]
    this.idle = []
    for (const [, p] of this.busy) p.reject(new Error('The engine threads were closed.'))
    this.busy.clear()
    for (const p of this.queue.splice(0)) p.reject(new Error('The engine threads were closed.'))
    this.started = 0
    await Promise.all(all.map(w => w.terminate()))
  }

  private pump() {
    while (this.queue.length) {
      const worker = this.idle.pop() ?? (this.started < this.size ? this.spawn() : undefined)
      if (!worker) return
      const job = this.queue.shift()!
      this.busy.set(worker, job)
      worker.ref()
      worker.postMessage({ id: job.id, task: job.task }, job.transfer)
    }
  }

  private spawn(): Worker {
    const worker = this.make()
    this.started++
    worker.unref()
    worker.on('message', (m: Reply) => {
      const job = this.busy.get(worker)
      if (!job || job.id !== m.id) return
      this.busy.delete(worker)
      worker.unref()
      this.idle.push(worker)
      if (m.error) job.reject(m.error.engine ? new EngineError(m.error.code, m.error.message, m.error.issues) : Object.assign(new Error(m.error.message), { stack: m.error.stack }))
      else job.resolve(m.value)
      this.pump()
    })
    const lost = (why: string) => {
      const job = this.busy.get(worker)
      this.busy.delete(worker)
      const at = this.idle.indexOf(worker)
      if (at >= 0) this.idle.splice(at, 1)
      else if (!job) return // already handled (an error is followed by an exit)
      this.started--
      job?.reject(new Error(`An engine thread stopped (${why}); please try again.`))
      this.pump()
    }
    worker.on('error', e => lost(e.message))
    worker.on('exit', code => lost(`exit code ${code}`))
    return worker
  }
}

export function engineThreadCount(): number {
  const asked = Number(process.env.COUNTERPART_ENGINE_THREADS)
  const n = Number.isInteger(asked) && asked > 0 ? asked : availableParallelism()
  return Math.min(4, Math.max(1, n))
}

let pool: Promise<ThreadPool | null> | undefined
function enginePool(): Promise<ThreadPool | null> {
  pool ??= import('#engine-thread').then((m) => {
    const url = new URL(m.default)
    const size = engineThreadCount()
    return new ThreadPool(() => new Worker(url, { workerData: { kind: 'counterpart-engine' } }), size, size * ENGINE_QUEUE_PER_THREAD)
  }, () => null)
  return pool
}

/** Says Retry-After on the current request, when there is one. */
function sayRetryAfter() {
  try {
    setResponseHeader(useEvent(), 'Retry-After', ENGINE_RETRY_AFTER_S)
  }
  catch { /* no request context */ }
}

/**
 * Answers kept by the caller's key, least recently used dropped first. The engine is pure and
 * seeded, so the same rows and spec give the same answer: a key must name both exactly (see
 * rowsIdentity()). Each caller gets its own copy, free to change.
 */
const answers = new Map<string, Promise<unknown>>()
const ANSWERS_KEPT = 200

/** A number for a set of rows read once and never changed (e.g. a candidate context's), for answer keys. */
const rowIds = new WeakMap<object, number>()
let lastRowsId = 0
export function rowsIdentity(rows: object): number {
  let id = rowIds.get(rows)
  if (id === undefined) rowIds.set(rows, (id = ++lastRowsId))
  return id
}

/**
 * Runs one engine task in a thread (or in-process from source); see the module comment.
 * `task` may be a function that makes it, called only when the answer must be computed.
 * With `keep`, the answer is kept under that key and given again for the same key: a copy,
 * or with `readOnly` the kept answer itself (no copy of a large result on every request), which
 * the caller must not change (copy what it changes: { ...answer, warnings: [...] }).
 */
export async function engineTask<K extends EngineTask['kind']>(task: Extract<EngineTask, { kind: K }> | (() => Extract<EngineTask, { kind: K }>), keep?: string, options: { readOnly?: boolean } = {}): Promise<EngineAnswers[K]> {
  // a function makes the task only when the answer is not kept (packing rows costs a little)
  const make = typeof task === 'function' ? task : () => task
  if (keep === undefined) return computeTask(make())
  let answer = answers.get(keep)
  if (answer) answers.delete(keep)
  else {
    answer = computeTask(make())
    answer.catch(() => answers.delete(keep!)) // a refusal or failure is not kept
    if (answers.size >= ANSWERS_KEPT) answers.delete(answers.keys().next().value!)
  }
  answers.set(keep, answer)
  const value = await answer as EngineAnswers[K]
  return options.readOnly ? value : structuredClone(value)
}

async function computeTask<K extends EngineTask['kind']>(task: Extract<EngineTask, { kind: K }>): Promise<EngineAnswers[K]> {
  const threads = await enginePool()
  if (!threads) return runEngineTask(task) as EngineAnswers[K]
  const transfer = 'rows' in task ? rowBuffers(task.rows) : []
  try {
    return await threads.run(task, transfer) as EngineAnswers[K]
  }
  catch (e) {
    if (e instanceof EngineBusyError) {
      sayRetryAfter()
      throw createError({ statusCode: 503, message: e.message, data: { retryAfter: e.retryAfter } })
    }
    throw e
  }
}

export { packRows, type PackedRows }
