/**
 * The engine thread pool's queue (server/utils/enginePool.ts) with tiny threads written here
 * (eval'd JavaScript that echoes, throws, waits or dies on command): answers come back to
 * the task that asked, at most `size` run at once, a full queue is refused with a 503 busy
 * error, an engine refusal is thrown again as an EngineError, and a dead thread is replaced.
 * Expected values are known by construction.
 */
import { Worker } from 'node:worker_threads'
import { afterEach, describe, expect, it } from 'vitest'
import { EngineBusyError, engineTask, engineThreadCount, packRows, rowsIdentity, ThreadPool } from '../../../server/utils/enginePool'
import { estimate } from '../../../server/engine'
import { EngineError, isEngineError } from '../../../server/engine/errors'

const CODE = `
const { parentPort } = require('node:worker_threads')
let running = 0
parentPort.on('message', async ({ id, task }) => {
  running++
  if (task.wait) await new Promise(r => setTimeout(r, task.wait))
  if (task.die) process.exit(3)
  if (task.refuse) parentPort.postMessage({ id, error: { engine: true, code: 'no_pre_periods', message: 'No pre-periods.', issues: ['x'] } })
  else if (task.fail) parentPort.postMessage({ id, error: { engine: false, message: 'broken' } })
  else parentPort.postMessage({ id, value: { echo: task.value, concurrent: running, buffer: task.buf ? task.buf.length : null } })
  running--
})`

let pool: ThreadPool | undefined
afterEach(async () => {
  await pool?.close()
  pool = undefined
})
const make = () => new Worker(CODE, { eval: true })

describe('ThreadPool', () => {
  it('answers each task with its own value, moving typed arrays', async () => {
    pool = new ThreadPool(make, 2, 10)
    const buf = new Float64Array([1, 2, 3])
    const answers = await Promise.all([1, 2, 3, 4, 5].map(v => pool!.run({ value: v, buf: v === 1 ? buf : undefined }, v === 1 ? [buf.buffer as ArrayBuffer] : [])))
    expect(answers.map(a => (a as { echo: number }).echo)).toEqual([1, 2, 3, 4, 5])
    expect((answers[0] as { buffer: number }).buffer).toBe(3)
    expect(buf.length).toBe(0) // moved to the thread, not copied
    // one task per thread at a time
    expect(answers.every(a => (a as { concurrent: number }).concurrent === 1)).toBe(true)
  })

  it('refuses past the queue bound with a 503 busy error and Retry-After seconds', async () => {
    pool = new ThreadPool(make, 1, 2)
    const first = pool.run({ value: 'a', wait: 200 }) // running
    const queued = [pool.run({ value: 'b' }), pool.run({ value: 'c' })] // waiting: the bound
    const refused = await pool.run({ value: 'd' }).catch(e => e)
    expect(refused).toBeInstanceOf(EngineBusyError)
    expect(refused.statusCode).toBe(503)
    expect(refused.retryAfter).toBeGreaterThan(0)
    expect(refused.message).toMatch(/busy.*try again/)
    expect(await first).toMatchObject({ echo: 'a' })
    expect(await Promise.all(queued)).toMatchObject([{ echo: 'b' }, { echo: 'c' }])
    // room again once the queue drained
    expect(await pool.run({ value: 'e' })).toMatchObject({ echo: 'e' })
  })

  it('throws an engine refusal as an EngineError with its code and issues, other failures as errors', async () => {
    pool = new ThreadPool(make, 1, 4)
    const e = await pool.run({ refuse: true }).catch(x => x)
    expect(isEngineError(e)).toBe(true)
    expect(e).toBeInstanceOf(EngineError)
    expect(e.code).toBe('no_pre_periods')
    expect(e.issues).toEqual(['x'])
    const f = await pool.run({ fail: true }).catch(x => x)
    expect(isEngineError(f)).toBe(false)
    expect(f.message).toBe('broken')
  })

  it('fails the task of a thread that dies and carries on with a new thread', async () => {
    pool = new ThreadPool(make, 1, 4)
    const died = pool.run({ die: true }).catch(e => e)
    const next = pool.run({ value: 'after' })
    expect((await died).message).toMatch(/engine thread stopped/)
    expect(await next).toMatchObject({ echo: 'after' })
  })
})

describe('engineThreadCount', () => {
  const saved = process.env.COUNTERPART_ENGINE_THREADS
  afterEach(() => {
    if (saved === undefined) delete process.env.COUNTERPART_ENGINE_THREADS
    else process.env.COUNTERPART_ENGINE_THREADS = saved
  })
  it('is between 1 and 4', () => {
    delete process.env.COUNTERPART_ENGINE_THREADS
    expect(engineThreadCount()).toBeGreaterThanOrEqual(1)
    expect(engineThreadCount()).toBeLessThanOrEqual(4)
    process.env.COUNTERPART_ENGINE_THREADS = '16'
    expect(engineThreadCount()).toBe(4)
    process.env.COUNTERPART_ENGINE_THREADS = '1'
    expect(engineThreadCount()).toBe(1)
  })
})

describe('engineTask from source (in-process), with kept answers', () => {
  // a small invented panel: the treated unit drops by 3 from period 5 (known by construction)
  const rows = ['T', 'A', 'B', 'C'].flatMap((u, k) => [1, 2, 3, 4, 5, 6, 7, 8].map(t => ({
    jurisdiction: u, period: String(t), values: { outcome: 5 + k + 0.3 * t + ((t + k) % 3) * 0.1 - (u === 'T' && t >= 5 ? 3 : 0) },
  })))
  const spec = { design: 'did', unit: 'unit', period: 'period', outcome: 'outcome', treated: ['T'], comparison: ['A', 'B', 'C'], start: 5 }
  const direct = estimate({ rows: rows.map(r => ({ unit: r.jurisdiction, period: r.period, values: r.values })) }, spec)

  it('gives the engine\'s answer, and a kept answer is a fresh copy each time', async () => {
    expect(direct.effect.estimate).toBeCloseTo(-3, 0)
    expect(await engineTask({ kind: 'estimate', rows: packRows(rows), spec })).toEqual(direct)
    const key = `test ${Math.random()}`
    const first = await engineTask({ kind: 'estimate', rows: packRows(rows), spec }, key)
    first.warnings.push('changed by the caller')
    const again = await engineTask({ kind: 'estimate', rows: packRows(rows), spec: { ...spec, comparison: ['A'] } }, key)
    // same key: the kept answer (so a key must name the rows and the spec), unchanged by the first caller
    expect(again).toEqual(direct)
  })

  it('does not keep a refusal', async () => {
    const key = `test ${Math.random()}`
    await expect(engineTask({ kind: 'estimate', rows: packRows(rows), spec: { ...spec, start: 99 } }, key)).rejects.toThrow()
    expect(await engineTask({ kind: 'estimate', rows: packRows(rows), spec }, key)).toEqual(direct)
  })

  it('numbers each set of rows once', () => {
    const a = {}
    const b = {}
    expect(rowsIdentity(a)).toBe(rowsIdentity(a))
    expect(rowsIdentity(a)).not.toBe(rowsIdentity(b))
  })
})
