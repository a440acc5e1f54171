// Diffusion (server/engine/threats/diffusion.ts): neighbours as if treated against distant
// donors. Invented series: a neighbour given a known shift shows exactly that shift.
import { describe, expect, it } from 'vitest'
import { diffusionEvidence, neighbourEffect } from '../../../server/engine/threats/diffusion'

const T = 20
const nPre = 12
// eight distant donors: a shared path, their own level, and their own fixed wiggle
const distant = Array.from({ length: 8 }, (_, j) => ({ unit: `D${j}`, values: Array.from({ length: T }, (_, t) => 4 + 0.1 * t + j + 0.3 * Math.sin(t * (j + 1))) }))
const distantMean = Array.from({ length: T }, (_, t) => distant.reduce((a, d) => a + d.values[t]!, 0) / distant.length)
const neighbourWith = (shift: number) => [{ unit: 'N1', values: distantMean.map((v, t) => v + 0.7 + (t >= nPre ? shift : 0)) }]

describe('diffusion', () => {
  it('a neighbour shifted by -0.9 after the start shows an effect of exactly -0.9', () => {
    const r = neighbourEffect({ periods: T, nPre, treatedEffect: -1, neighbours: neighbourWith(-0.9), distant })
    expect(r.effect).toBeCloseTo(-0.9, 12)
    expect(r.placebos).toHaveLength(8)
    // leave-one-out placebos: each is (1 + 1/7) times the donor's own two-by-two against the mean of all eight, so they straddle 0
    expect(Math.min(...r.placebos.map(p => p.effect))).toBeLessThan(0)
    expect(Math.max(...r.placebos.map(p => p.effect))).toBeGreaterThan(0)
  })

  it('weakens when the shift lies beyond the placebo range in the treated unit\'s direction; supports at no shift', () => {
    const e = diffusionEvidence({ periods: T, nPre, treatedEffect: -1, neighbours: neighbourWith(-5), distant })
    expect(e.verdict).toBe('weakens')
    expect(e.explanation).toMatch(/same direction/)
    expect(diffusionEvidence({ periods: T, nPre, treatedEffect: -1, neighbours: neighbourWith(0), distant }).verdict).toBe('supports')
  })

  it('cannot tell without neighbours or with too few distant donors', () => {
    expect(diffusionEvidence({ periods: T, nPre, treatedEffect: -1, neighbours: [], distant }).verdict).toBe('unclear')
    expect(diffusionEvidence({ periods: T, nPre, treatedEffect: -1, neighbours: neighbourWith(-5), distant: distant.slice(0, 4) }).verdict).toBe('unclear')
  })
})
