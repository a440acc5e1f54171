// The reader's scale for a count model's series: invented counts whose rates are known by construction.
import { describe, expect, it } from 'vitest'
import { hasExposure, scaleItsSeries, scaleTitle } from '../../../app/utils/itsScale'

const series = [
  { period: '2001', observed: 12, fitted: 10, counterfactual: 10, counterfactualLow: 8, counterfactualHigh: 12.5, exposure: 2000 },
  { period: '2002', observed: 5, fitted: 6, counterfactual: 9, counterfactualLow: null, counterfactualHigh: null, exposure: 4000 },
]

describe('scaleItsSeries', () => {
  it('divides by the exposure and multiplies by the scale', () => {
    const per1000 = scaleItsSeries(series, 1000)
    expect(per1000[0]).toMatchObject({ observed: 6, fitted: 5, counterfactual: 5, counterfactualLow: 4, counterfactualHigh: 6.25 })
    expect(per1000[1]).toMatchObject({ observed: 1.25, fitted: 1.5, counterfactual: 2.25, counterfactualLow: null })
    expect(scaleItsSeries(series, 100000)[0]!.observed).toBe(600)
  })
  it('leaves counts alone at scale 0 or without an exposure', () => {
    expect(scaleItsSeries(series, 0)).toBe(series)
    const bare = series.map(({ exposure: _e, ...p }) => p)
    expect(hasExposure(bare)).toBe(false)
    expect(scaleItsSeries(bare, 1000)).toBe(bare)
    expect(scaleTitle(100000)).toBe('per 100,000')
  })
})
