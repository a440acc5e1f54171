// The counterfactual band's chart datasets: invented points whose answer is known by construction.
import { describe, expect, it } from 'vitest'
import { bandLegend, bandLevel, counterfactualBand } from '../../../app/utils/counterfactualBand'

const point = (period: string, low: number | null | undefined, high: number | null | undefined) => ({ period, observed: 1, fitted: 1, counterfactual: 1, counterfactualLow: low, counterfactualHigh: high })

describe('counterfactualBand', () => {
  it('gives a hidden lower edge and an upper edge filled down to it, labelled in plain words', () => {
    const ds = counterfactualBand([point('2001', 0.5, 1.5), point('2002', 0.4, 1.6)], 0.95)
    expect(ds).toHaveLength(2)
    expect(ds[0].label.startsWith('_')).toBe(true)
    expect(ds[0].data).toEqual([0.5, 0.4])
    expect(ds[1].data).toEqual([1.5, 1.6])
    expect(ds[1].fill).toBe('-1')
    expect(ds[1].label).toBe('Without the policy: projected pre-policy trend, 95% band')
  })
  it('draws nothing for runs stored before the band existed', () => {
    expect(counterfactualBand([point('2001', undefined, undefined)], 0.95)).toEqual([])
  })
  it('reads the level from the spec, 95% when absent or invalid', () => {
    expect(bandLevel({ inference: { level: 0.9 } })).toBe(0.9)
    expect(bandLevel({})).toBe(0.95)
    expect(bandLevel({ inference: { level: 3 } })).toBe(0.95)
    expect(bandLegend(0.9)).toMatch(/90% band$/)
  })
})
