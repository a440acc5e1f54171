// Placebo in time (server/engine/robustness/placeboTime.ts) on the invented panel of panel.ts:
// every expected value is computed by hand from the construction described there.
import { describe, expect, it } from 'vitest'
import { isEngineError } from '../../../server/engine/errors'
import { placeboInTime, isRobustnessCancelled } from '../../../server/engine/robustness'
import { FULL, rows, spec } from './panel'

describe('placebo in time', () => {
  it('re-estimates at every fake start at least 3 periods from the pre-period ends, on matched windows', async () => {
    const r = await placeboInTime(rows, spec)
    // pre-period 2001-2007 (7 periods): fake starts 2004 and 2005 only
    expect(r.prePeriods).toBe(7)
    expect(r.fakes.map(f => f.start)).toEqual(['2004', '2005'])
    expect(r.window).toBe(3)
    // every effect over 3 periods either side of its start (donors flat in the pre-period):
    // 2004: A 2004-2006 (10+13+10)/3 = 11 minus 2001-2003 10 = 1
    expect(r.fakes[0]!.estimate).toBeCloseTo(1, 10)
    // 2005: A 2005-2007 = 11 minus 2002-2004 = 10: 1
    expect(r.fakes[1]!.estimate).toBeCloseTo(1, 10)
    // actual 2008: A 2008-2010 = 15 minus 2005-2007 = 11: 4; donors move 0, 2, 0: 4 - 2/3 = 10/3
    expect(r.actual.estimate).toBeCloseTo(10 / 3, 10)
    expect(r.runEstimate).toBeCloseTo(FULL, 10)
    expect(r.actual.start).toBe('2008')
    expect(r.n).toBe(2)
    expect(r.atLeastAsLarge).toBe(0)
    expect(r.share).toBe(0)
  })

  it('matched windows of 2: every fake and the actual over 2 periods either side', async () => {
    const r = await placeboInTime(rows, spec, { minDistance: 2 })
    expect(r.fakes.map(f => f.start)).toEqual(['2003', '2004', '2005', '2006'])
    // 2003: 10 - 10 = 0; 2004: (10+13)/2 - 10 = 1.5; 2005: (13+10)/2 - 10 = 1.5; 2006: 10 - 11.5 = -1.5
    ;[0, 1.5, 1.5, -1.5].forEach((v, i) => expect(r.fakes[i]!.estimate).toBeCloseTo(v, 10))
    // actual: A 15 - 10 = 5; donors 0, 2, 0: 5 - 2/3 = 13/3
    expect(r.actual.estimate).toBeCloseTo(13 / 3, 10)
    expect(r.share).toBe(0)
  })

  it('counts the fakes at least as large as the actual effect', async () => {
    // minDistance 2: starts 2003..2006 with fakes 0.6, 0.75, 1 and (10 - 10.6) = -0.6
    const r = await placeboInTime(rows, spec, { minDistance: 2, actual: 0.7, matchWindows: false })
    expect(r.fakes.map(f => f.start)).toEqual(['2003', '2004', '2005', '2006'])
    const est = r.fakes.map(f => f.estimate!)
    ;[0.6, 0.75, 1, -0.6].forEach((v, i) => expect(est[i]).toBeCloseTo(v, 10))
    expect(r.atLeastAsLarge).toBe(2)
    expect(r.share).toBe(0.5)
    expect(r.warnings.join(' ')).toMatch(/coarse/)
  })

  it('reports progress up to 1 and stops when cancelled', async () => {
    const seen: number[] = []
    await placeboInTime(rows, spec, {}, { progress: f => void seen.push(f) })
    expect(seen[0]).toBe(0)
    expect(seen.at(-1)).toBe(1)
    expect([...seen].sort((a, b) => a - b)).toEqual(seen)
    let calls = 0
    const stopped = await placeboInTime(rows, spec, {}, { isCancelled: () => ++calls > 1 }).catch(e => e)
    expect(isRobustnessCancelled(stopped)).toBe(true)
    expect(calls).toBe(2)
  })

  it('refuses a pre-period too short for the distance asked, and different starts', async () => {
    const short = await placeboInTime(rows, spec, { minDistance: 4 }).catch(e => e)
    expect(isEngineError(short)).toBe(true)
    expect(short.message).toMatch(/7 periods; a fake start needs 4 on each side/)
    const two = [...rows.map(r => (r.unit === 'B' ? { ...r } : r))]
    const staggered = await placeboInTime(two, { design: 'did', treated: ['A', 'B'], start: { A: 2008, B: 2009 } }).catch(e => e)
    expect(staggered.message).toMatch(/2 different dates/)
  })
})
