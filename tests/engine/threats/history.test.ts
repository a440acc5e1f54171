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
    // pool 0; treated pre = [1,0,0,1,0,0,0], post = [0.5,0.5]; nPre 7, two post-periods -> window h = min(3, 2) = 2,
    // fake dates 2..5; effect(d) = mean[d, d+2) - mean[d-2, d):
    // actual = mean[0.5,0.5] - mean[0,0] = 0.5; fake(2) = 0.5 - 0.5 = 0; fake(3) = 0.5 - 0 = 0.5;
    // fake(4) = 0 - 0.5 = -0.5; fake(5) = 0 - 0.5 = -0.5
    const treated = [1, 0, 0, 1, 0, 0, 0, 0.5, 0.5]
    const pool = new Array(9).fill(0)
    const r = placeboDates({ periods: periods(9), nPre: 7, treated, pool })
    expect(r.window).toBe(2)
    expect(r.actual).toBeCloseTo(0.5, 14)
    expect(r.fakes.map(f => f.index)).toEqual([2, 3, 4, 5])
    expect(r.fakes.map(f => f.effect)).toEqual([expect.closeTo(0, 14), expect.closeTo(0.5, 14), expect.closeTo(-0.5, 14), expect.closeTo(-0.5, 14)])
    expect(r.share).toBe(0.75) // three of four reach |0.5| (ties count)
    expect(r.p).toBe(0.8) // (1 + 3) / (1 + 4)
    // fewer than 5 fake dates: cannot tell
    expect(historyEvidence({ periods: periods(9), nPre: 7, treated, pool }).verdict).toBe('unclear')
  })

  it('a gap drifting at a steady pace: the real start looks like every fake date (equal windows)', () => {
    // gap = 0.1 t throughout, no step: every date's effect is 0.1 * 3 = 0.3, the real one included, so all
    // fake dates tie with it. (Comparing the whole pre-period with the whole post-period would have made the
    // real effect 0.1 * 20 / 2 = 1 against fakes of at most 0.1 * 16 / 2 = 0.8: "supports" for pure drift.)
    const T = 20
    const nPre = 16
    const pool = Array.from({ length: T }, (_, t) => 3 + Math.cos(t))
    const treated = pool.map((v, t) => v + 0.1 * t)
    const r = placeboDates({ periods: periods(T), nPre, treated, pool })
    expect(r.actual).toBeCloseTo(0.3, 12)
    for (const f of r.fakes) expect(f.effect).toBeCloseTo(0.3, 12)
    expect(r.share).toBe(1)
    expect(historyEvidence({ periods: periods(T), nPre, treated, pool }).verdict).toBe('weakens')
  })

  it('no fake date reaches the real effect, but 7 dates cannot give a placebo p of 0.10: cannot tell', () => {
    // the step construction of the first test with 12 pre-periods: fake dates 3..9, share 0, p = 1/8
    const T = 18
    const nPre = 12
    const pool = Array.from({ length: T }, (_, t) => 5 + 0.3 * t + Math.sin(t * 1.3))
    const treated = pool.map((v, t) => v + 2 + (t >= nPre ? 1.5 : 0))
    const r = placeboDates({ periods: periods(T), nPre, treated, pool })
    expect(r.fakes.length).toBe(7)
    expect(r.share).toBe(0)
    expect(r.p).toBe(1 / 8)
    const e = historyEvidence({ periods: periods(T), nPre, treated, pool })
    expect(e.verdict).toBe('unclear')
    expect(e.explanation).toMatch(/^Too few fake dates/)
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
