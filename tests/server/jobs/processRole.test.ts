/** COUNTERPART_ROLE decides whether a process runs jobs (server/utils/processRole.ts); a misspelt role is refused. */
import { afterEach, describe, expect, it, vi } from 'vitest'

const saved = process.env.COUNTERPART_ROLE

async function load(role: string | undefined) {
  if (role === undefined) delete process.env.COUNTERPART_ROLE
  else process.env.COUNTERPART_ROLE = role
  vi.resetModules()
  return await import('../../../server/utils/processRole')
}

afterEach(() => {
  if (saved === undefined) delete process.env.COUNTERPART_ROLE
  else process.env.COUNTERPART_ROLE = saved
})

describe('processRole', () => {
  it('defaults to all, which serves and runs jobs', async () => {
    const m = await load(undefined)
    expect(m.processRole()).toBe('all')
    expect(m.runsJobs()).toBe(true)
  })

  it('web never runs jobs; worker does', async () => {
    expect((await load('web')).runsJobs()).toBe(false)
    const worker = await load(' Worker ')
    expect(worker.processRole()).toBe('worker')
    expect(worker.runsJobs()).toBe(true)
    expect(worker.runnerName()).toMatch(new RegExp(`:${process.pid} worker$`))
  })

  it('refuses anything else by name', async () => {
    const m = await load('wrker')
    expect(() => m.processRole()).toThrow(/web, worker or all, not "wrker"/)
  })
})
