/** The cancellation contract other job kinds rely on (server/utils/jobCancelled.ts): the error's name and its test. */
import { describe, expect, it } from 'vitest'
import { JobCancelled, isJobCancelled } from '../../../server/utils/jobCancelled'

describe('JobCancelled', () => {
  it('is an Error named JobCancelled, recognised by isJobCancelled', () => {
    const e = new JobCancelled()
    expect(e).toBeInstanceOf(Error)
    expect(e.name).toBe('JobCancelled')
    expect(e.message).toMatch(/cancel/i)
    expect(isJobCancelled(e)).toBe(true)
  })

  it('recognises one from another copy of the module by name, and nothing else', () => {
    const copy = Object.assign(new Error('stopped'), { name: 'JobCancelled' })
    expect(isJobCancelled(copy)).toBe(true)
    expect(isJobCancelled(new Error('Cancelled'))).toBe(false)
    expect(isJobCancelled({ name: 'JobCancelled' })).toBe(false)
    expect(isJobCancelled(undefined)).toBe(false)
  })
})
