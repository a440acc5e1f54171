// The strip chart beside a threat's evidence: invented values whose layout is known by construction.
import { describe, expect, it } from 'vitest'
import { stripLayout } from '../../../app/utils/evidenceStrip'

describe('stripLayout', () => {
  it('places the values and the mark on one scale from the smallest to the largest', () => {
    const s = stripLayout({ label: 'fake', values: [-1, 0, 1], marked: 3, markedLabel: 'real' }, 100, 10)
    expect(s.min).toBe(-1)
    expect(s.max).toBe(3)
    expect(s.dots.map(d => d.x)).toEqual([10, 30, 50]) // 10 + (v + 1) / 4 * 80
    expect(s.mark).toBe(90)
    expect(s.zero).toBe(30)
  })
  it('widens a scale with a single value and leaves out the mark when there is none', () => {
    const s = stripLayout({ label: 'x', values: [2, 2], marked: null, markedLabel: '' }, 100, 10)
    expect([s.min, s.max]).toEqual([1, 3])
    expect(s.dots[0]!.x).toBe(50)
    expect(s.mark).toBeNull()
    expect(s.zero).toBeNull()
  })
})
