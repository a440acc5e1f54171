// Leave one donor out (server/engine/robustness/leaveOneOut.ts). Hand-computed values on the
// invented panel of panel.ts, and the property that the estimate without a donor equals a
// fresh estimate on a pool without it (random invented panels, answer known by construction).
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { estimate } from '../../../server/engine'
import { leaveOneOut } from '../../../server/engine/robustness'
import type { TypedRow } from '../../../server/engine/panel'
import { FULL, rows, spec } from './panel'

describe('leave one donor out', () => {
  it('gives the estimate without each donor, its range and the most influential donor', async () => {
    const r = await leaveOneOut({ rows }, spec)
    expect(r.full).toBeCloseTo(FULL, 10)
    const by = Object.fromEntries(r.rows.map(x => [x.unit, x.estimate!]))
    // without B: donors C, D move (2 + 0)/2 = 1 -> 32/7 - 1; without C: 0 -> 32/7; without D: 1 -> 25/7
    expect(by.B).toBeCloseTo(25 / 7, 10)
    expect(by.C).toBeCloseTo(32 / 7, 10)
    expect(by.D).toBeCloseTo(25 / 7, 10)
    expect(r.min).toBeCloseTo(25 / 7, 10)
    expect(r.max).toBeCloseTo(32 / 7, 10)
    // C moves it by 2/3; B and D by 1/3 each (a tie, kept in code order)
    expect(r.mostInfluential).toEqual(['C', 'B', 'D'])
    expect(r.rows.find(x => x.unit === 'C')!.change).toBeCloseTo(32 / 7 - FULL, 10)
  })

  it('refuses a pool of one', async () => {
    await expect(leaveOneOut({ rows }, { ...spec, comparison: ['B'] })).rejects.toThrow(/at least two/)
  })

  it('property: the estimate without one donor equals a fresh estimate on a pool without it', async () => {
    await fc.assert(fc.asyncProperty(
      fc.array(fc.double({ min: -50, max: 50, noNaN: true }), { minLength: 5 * 8, maxLength: 5 * 8 }),
      fc.array(fc.double({ min: 0, max: 5, noNaN: true }), { minLength: 5 * 8, maxLength: 5 * 8 }),
      async (ys, xs) => {
        const units = ['T', 'P', 'Q', 'R', 'S']
        const panel: TypedRow[] = units.flatMap((u, i) => Array.from({ length: 8 }, (_, t) => ({ unit: u, period: 2001 + t, values: { outcome: ys[i * 8 + t]!, x: xs[i * 8 + t]! } })))
        const s = { design: 'did', treated: ['T'], start: 2005, covariates: ['x'], inference: { method: 'analytic' } } as const
        const r = await leaveOneOut({ rows: panel }, s)
        for (const row of r.rows) {
          if (row.estimate === null) continue
          const fresh = estimate({ rows: panel }, { ...s, comparison: units.slice(1).filter(u => u !== row.unit) }).effect.estimate
          expect(Math.abs(row.estimate - fresh)).toBeLessThanOrEqual(1e-9 * (1 + Math.abs(fresh)))
        }
      },
    ), { numRuns: 25 })
  })
})
