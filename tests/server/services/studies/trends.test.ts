/** Trend helpers: the seasonality share behind the warning, and the plain-language lead-test reading. */
import { describe, expect, it } from 'vitest'
import { readLeadTest, seasonalShare } from '../../../../server/services/studies/trends'

const months = Array.from({ length: 48 }, (_, i) => `${2020 + Math.floor(i / 12)}-${String((i % 12) + 1).padStart(2, '0')}`)

describe('seasonalShare', () => {
  it('is near 1 for a purely seasonal series around a trend, near 0 without seasons', () => {
    const seasonal = months.map((_, i) => 10 + 0.1 * i + Math.sin((2 * Math.PI * (i % 12)) / 12))
    expect(seasonalShare(months, seasonal, 'month')).toBeGreaterThan(0.9)
    let seed = 7
    const noise = () => ((seed = (seed * 16807) % 2147483647) / 2147483647 - 0.5)
    const flat = months.map((_, i) => 10 + 0.1 * i + noise())
    expect(seasonalShare(months, flat, 'month')!).toBeLessThan(0.5)
  })

  it('needs two years of values', () => {
    expect(seasonalShare(months.slice(0, 20), months.slice(0, 20).map((_, i) => i), 'month')).toBeNull()
  })
})

describe('readLeadTest', () => {
  const wald = { terms: ['rel_-3', 'rel_-2'], chi2: 1, pChi2: 0.6, F: 0.5, df1: 2, df2: 20, p: 0.61 }
  const slopeDiff = { estimate: -0.02, se: 0.005, df: 20, p: 0.0004, nObs: 100 }

  it('reads a quiet lead test as consistent with, not proof of, parallel trends', () => {
    const r = readLeadTest({ preTrend: { wald, slopeDiff: { ...slopeDiff, p: 0.4 } }, inference: { method: 'analytic' }, nClusters: 60 } as never)
    expect(r.reading[0]).toContain('not jointly different from zero')
    expect(r.reading[0]).toContain('does not prove')
    expect(r.reading[1]).toContain('not a clear divergence')
  })

  it('reads a failed test and a diverging slope as a warning', () => {
    const r = readLeadTest({ preTrend: { wald: { ...wald, p: 0.001, F: 9 }, slopeDiff }, inference: { method: 'analytic' }, nClusters: 60 } as never)
    expect(r.reading[0]).toContain('in doubt')
    expect(r.reading[1]).toContain('below the pool')
    expect(r.reading[1]).toContain('p < 0.001')
  })

  it('with few clusters the F test cannot be judged and no pool change is advised; placebo units decide', () => {
    const few = readLeadTest({ preTrend: { wald: { ...wald, p: 0.001, F: 26.9 }, slopeDiff: null }, inference: { method: 'permutation' }, nClusters: 11 } as never)
    expect(few.reading[0]).toMatch(/unreliable and cannot be judged/)
    expect(few.reading.join(' ')).not.toMatch(/pool/)
    const placebo = readLeadTest({ preTrend: { wald: { ...wald, p: 0.001, F: 26.9 }, slopeDiff: null, leadPermutation: { p: 0.3, nPlacebos: 54, pMin: 1 / 55 } }, inference: { method: 'permutation' }, nClusters: 56 } as never)
    expect(placebo.reading[0]).toMatch(/not unusual \(p = 0\.300 by placebo units\)/)
    expect(placebo.reading[1]).toMatch(/is not a guide here/)
    // at the top of 20 units the smallest p a placebo ranking allows is 0.05: that is unusual, not reassuring
    const top = readLeadTest({ preTrend: { wald, slopeDiff: null, leadPermutation: { p: 0.05, nPlacebos: 19, pMin: 0.05 } }, inference: { method: 'permutation' }, nClusters: 20 } as never)
    expect(top.reading[0]).toMatch(/larger than every placebo unit's .*in doubt/)
  })

  it('says when there is nothing to test', () => {
    expect(readLeadTest(null).reading[0]).toContain('no lead coefficients')
  })
})
