// Maturation evidence (server/engine/threats/maturation.ts): pre-period slopes of the treated
// series and of the gap. Invented series, answers known by construction.
import { describe, expect, it } from 'vitest'
import { maturationEvidence, preTrends } from '../../../server/engine/threats/maturation'

const periods = (n: number) => Array.from({ length: n }, (_, i) => String(2000 + i))

describe('maturation', () => {
  it('a gap growing 0.5 per period before the start: slope 0.5, interval excludes 0, weakens', () => {
    const pool = [3, 4, 2, 5, 3, 4, 2, 6, 6]
    const treated = pool.map((v, t) => v + 0.5 * t)
    const s = { periods: periods(9), nPre: 7, treated, pool }
    const r = preTrends(s)
    expect(r.gap!.slope).toBeCloseTo(0.5, 12)
    expect(maturationEvidence(s).verdict).toBe('weakens')
  })

  it('a gap with symmetric noise around a flat line: slope 0 exactly, supports', () => {
    // deviations [0,1,-1,0,-1,1,0] against t - 3: sum of products 0 -> slope 0 (by hand)
    const pool = [10, 11, 12, 13, 14, 15, 16, 17, 18]
    const dev = [0, 1, -1, 0, -1, 1, 0, 0, 0]
    const treated = pool.map((v, t) => v + 2 + dev[t]!)
    const s = { periods: periods(9), nPre: 7, treated, pool }
    const r = preTrends(s)
    expect(r.gap!.slope).toBeCloseTo(0, 12)
    expect(r.treated!.slope).toBeCloseTo(1, 12) // the treated unit drifts, but so does the pool
    const e = maturationEvidence(s)
    expect(e.verdict).toBe('supports')
    expect(e.figures.gapSlopeLow!).toBeLessThan(0)
  })

  it('cannot tell with fewer than 6 pre-periods', () => {
    expect(maturationEvidence({ periods: periods(7), nPre: 5, treated: [1, 2, 3, 4, 5, 6, 7], pool: [0, 0, 0, 0, 0, 0, 0] }).verdict).toBe('unclear')
  })
})
