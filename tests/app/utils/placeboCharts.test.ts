// The placebo strip and its share: invented numbers whose answer is known by construction.
import { describe, expect, it } from 'vitest'
import { placeboStrip, shareAsLarge } from '../../../app/utils/placeboCharts'

const inference = { placebos: [{ unit: 'A', estimate: 0.5, ratio: 1 }, { unit: 'B', estimate: -2, ratio: 1 }, { unit: 'C', estimate: 0.1, ratio: 1 }, { unit: 'D', estimate: 1, ratio: 1 }] }

describe('placebo strip', () => {
  it('sorts the placebos, spreads them over rows and centres the actual effect', () => {
    const s = placeboStrip(inference, -1, 3)
    expect(s.placebos.map(p => p.label)).toEqual(['B', 'C', 'A', 'D'])
    expect(s.placebos.map(p => p.y)).toEqual([1, 2, 3, 1])
    expect(s.actual).toEqual({ x: -1, y: 2, label: 'treated' })
  })
  it('counts placebos at least as large as the actual effect, ties included', () => {
    expect(shareAsLarge(inference, -1)).toBe(0.5)
    expect(shareAsLarge(inference, 2)).toBe(0.25)
    expect(shareAsLarge({ placebos: [] }, 1)).toBeNull()
  })
})
