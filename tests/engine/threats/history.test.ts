// History evidence (server/engine/threats/history.ts): placebo start dates inside the
// pre-period. Every series here is invented and its answer known by construction.
import { describe, expect, it } from 'vitest'
import { comparisonChange, historyEvidence, placeboDates } from '../../../server/engine/threats/history'

const periods = (n: number) => Array.from({ length: n }, (_, i) => String(2000 + i))

describe('placeboDates', () => {
  it('a step only at the real start: no fake date reaches the actual effect (share 0)', () => {
    // pool: any wiggly path; treated = pool + 2 + 1.5 from the start on, so the gap is flat before it
    const T = 24
    const nPre = 16
    const pool = Array.from({ length: T }, (_, t) => 5 + 0.3 * t + Math.sin(t * 1.3))
    const treated = pool.map((v, t) => v + 2 + (t >= nPre ? 1.5 : 0))
    const r = placeboDates({ periods: periods(T), nPre, treated, pool })
    expect(r.actual).toBeCloseTo(1.5, 12)
    expect(r.fakes.map(f => f.index)).toEqual([3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13]) // 3 <= d <= 16 - 3
    for (const f of r.fakes) expect(f.effect).toBeCloseTo(0, 12)
    expect(r.share).toBe(0)
    const e = historyEvidence({ periods: periods(T), nPre, treated, pool })
    expect(e.verdict).toBe('supports')
    expect(e.figure).toMatch(/^0 of 11 fake start dates/)
  })

  it('exact values on a pure-noise construction, computed by hand', () => {
    // pool 0; treated pre = [1,0,0,1,0,0,0], post = [0.5,0.5]; nPre 7, k 3 -> fake dates 3 and 4
    // actual = 0.5 - 2/7; fake(3) = mean[1,0,0,0] - mean[1,0,0] = 0.25 - 1/3; fake(4) = mean[0,0,0] - mean[1,0,0,1] = -0.5
    const treated = [1, 0, 0, 1, 0, 0, 0, 0.5, 0.5]
    const pool = new Array(9).fill(0)
    const r = placeboDates({ periods: periods(9), nPre: 7, treated, pool })
    expect(r.actual).toBeCloseTo(0.5 - 2 / 7, 14)
    expect(r.fakes.map(f => f.effect)).toEqual([expect.closeTo(0.25 - 1 / 3, 14), expect.closeTo(-0.5, 14)])
    expect(r.share).toBe(0.5) // only |-0.5| >= 0.214
    // fewer than 5 fake dates: cannot tell
    expect(historyEvidence({ periods: periods(9), nPre: 7, treated, pool }).verdict).toBe('unclear')
  })

  it('a gap that jumps around as much before the start as at it weakens the estimate', () => {
    // gap alternates 0,3,0,3,... before; the real start adds nothing beyond that pattern
    const T = 30
    const nPre = 24
    const pool = new Array(T).fill(1)
    const treated = pool.map((v, t) => v + (Math.floor(t / 3) % 2 ? 3 : 0))
    const e = historyEvidence({ periods: periods(T), nPre, treated, pool })
    expect(e.verdict).toBe('weakens')
    expect(e.figures.shareAtLeastActual).toBeGreaterThan(0.25)
  })

  it('the comparison\'s own change at the start, in pre-period residual SDs', () => {
    // pool pre = [0,1,0,1,...] (8 values: slope by hand 4/42 = 2/21), post = 3
    const pool = [0, 1, 0, 1, 0, 1, 0, 1, 3, 3]
    const c = comparisonChange({ periods: periods(10), nPre: 8, treated: pool, pool })
    expect(c.change).toBeCloseTo(3 - 0.5, 14)
    expect(c.z).toBeGreaterThan(2)
  })
})
