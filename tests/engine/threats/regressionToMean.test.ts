// Regression to the mean (server/engine/threats/regressionToMean.ts): the z-score of the last
// two pre-periods against the earlier pre-period's trend, computed by hand on invented series.
import { describe, expect, it } from 'vitest'
import { regressionToMeanEvidence, spikeZ } from '../../../server/engine/threats/regressionToMean'

const periods = (n: number) => Array.from({ length: n }, (_, i) => String(2000 + i))

// earlier pre-period [10,12,12,10,10,12,12,10]: by hand, slope 0 (the products with t - 3.5
// cancel), intercept 11, SSR 8, residual SD sqrt(8 / 6)
const earlier = [10, 12, 12, 10, 10, 12, 12, 10]
const sd = Math.sqrt(8 / 6)

describe('regression to the mean', () => {
  it('a spike before the start: z = (14 - 11) / sqrt(8/6) = 2.598, weakens', () => {
    const treated = [...earlier, 14, 14, 9, 9]
    const s = { periods: periods(12), nPre: 10, treated, pool: new Array(12).fill(0) }
    const r = spikeZ(s)
    expect(r.expected).toBeCloseTo(11, 12)
    expect(r.sd).toBeCloseTo(sd, 12)
    expect(r.z).toBeCloseTo(3 / sd, 12)
    expect(regressionToMeanEvidence(s).verdict).toBe('weakens')
  })

  it('an ordinary last two periods: z = (12 - 11) / sqrt(8/6) = 0.866, supports', () => {
    const treated = [...earlier, 12, 12, 9, 9]
    const s = { periods: periods(12), nPre: 10, treated, pool: new Array(12).fill(0) }
    expect(spikeZ(s).z).toBeCloseTo(1 / sd, 12)
    expect(regressionToMeanEvidence(s).verdict).toBe('supports')
  })

  it('the last period alone (m = 1): a dip of -3 gives z = -3 / SD of the first nine', () => {
    // first nine [10,12,12,10,10,12,12,10,11]: slope and SD computed independently below
    const first = [...earlier, 11]
    const n = first.length
    const mt = (n - 1) / 2
    const my = first.reduce((a, b) => a + b, 0) / n
    const b = first.reduce((a, y, t) => a + (t - mt) * (y - my), 0) / first.reduce((a, _, t) => a + (t - mt) ** 2, 0)
    const ssr = first.reduce((a, y, t) => a + (y - my - b * (t - mt)) ** 2, 0)
    const expected = my + b * (n - mt)
    const treated = [...first, expected - 3, 5]
    const r = spikeZ({ periods: periods(11), nPre: 10, treated, pool: new Array(11).fill(0) }, 1)
    expect(r.z).toBeCloseTo(-3 / Math.sqrt(ssr / (n - 2)), 10)
  })
})
