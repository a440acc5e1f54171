/** The progressive sign-in delay (server/services/signInThrottle.ts): the schedule by construction from its doc comment. */
import { describe, expect, it } from 'vitest'
import { delaySeconds, THROTTLE, waitSeconds } from '../../../server/services/signInThrottle'

describe('delaySeconds', () => {
  it('is free below the allowance, then 1, 2, 4 ... seconds, capped at 60', () => {
    const schedule = Array.from({ length: 12 }, (_, i) => delaySeconds(i, THROTTLE.perAccount))
    expect(schedule).toEqual([0, 0, 0, 0, 0, 1, 2, 4, 8, 16, 32, 60])
    expect(delaySeconds(100, THROTTLE.perAccount)).toBe(60)
    expect(delaySeconds(19, THROTTLE.perAddress)).toBe(0)
    expect(delaySeconds(20, THROTTLE.perAddress)).toBe(1)
  })
})

describe('waitSeconds', () => {
  it('counts from the latest failure and rounds up', () => {
    const latest = new Date('2026-01-01T10:00:00Z')
    expect(waitSeconds(8, latest, 5, new Date('2026-01-01T10:00:03Z'))).toBe(5) // 8 s delay, 3 s gone
    expect(waitSeconds(8, latest, 5, new Date('2026-01-01T10:00:07.5Z'))).toBe(1)
    expect(waitSeconds(8, latest, 5, new Date('2026-01-01T10:00:08Z'))).toBe(0)
    expect(waitSeconds(3, latest, 5, latest)).toBe(0)
    expect(waitSeconds(0, null, 5)).toBe(0)
  })
})
