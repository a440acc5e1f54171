// Placebo in space and alternative pools (server/engine/robustness/placeboSpace.ts, pools.ts).
// The invented panel of panel.ts (hand-computed), and the shared reference check
// c3_gasoline_placebo_space (plm 2.6.2 Gasoline, computed in R; see tests/engine/permutation.test.ts).
import { describe, expect, it } from 'vitest'
import { estimate } from '../../../server/engine'
import { alternativePools, placeboInSpace } from '../../../server/engine/robustness'
import { type Expected, loadCase } from '../helpers'
import { FULL, rows, spec } from './panel'

describe('placebo in space', () => {
  it('estimates each donor as a fake treated unit when the run has no placebos', async () => {
    const r = await placeboInSpace({ rows }, { ...spec, inference: { method: 'analytic' } })
    expect(r.source).toBe('estimated')
    const by = Object.fromEntries(r.placebos.map(p => [p.unit, p.estimate]))
    // B against C, D: 0 - 1 = -1; C against B, D: 2 - 0 = 2; D against B, C: 0 - 1 = -1
    expect(by.B).toBeCloseTo(-1, 10)
    expect(by.C).toBeCloseTo(2, 10)
    expect(by.D).toBeCloseTo(-1, 10)
    expect(r.actual).toBeCloseTo(FULL, 10)
    expect(r.atLeastAsLarge).toBe(0)
    expect(r.share).toBe(0)
    expect(r.p).toBeCloseTo(1 / 4, 15)
    expect(r.ciLow).toBeNull()
  })

  it('reuses the run\'s placebos and matches the reference p-value (c3 Gasoline)', async () => {
    const c3 = loadCase('c3_gasoline_placebo_space')
    const e: Expected = c3.expected
    const s = { design: 'did', treated: ['NORWAY'], start: 1973, inference: { method: 'permutation' } } as const
    const run = estimate(c3.panel, s)
    const r = await placeboInSpace(c3.panel, s, { result: run })
    expect(r.source).toBe('run')
    expect(Math.abs(r.p - e.p_effect)).toBeLessThanOrEqual(1e-15)
    expect(r.n).toBe(e.n_units_permutation - 1)
    expect(r.share).toBeCloseTo((e.p_effect * e.n_units_permutation - 1) / (e.n_units_permutation - 1), 12)
  })
})

describe('alternative pools', () => {
  it('estimates on each named pool and keeps a pool that cannot be estimated with its reason', async () => {
    const r = await alternativePools({ rows }, spec, [
      { name: 'flat', label: 'Flat donors', units: ['B', 'D'] },
      { name: 'rising', label: 'Rising donor', units: ['C'] },
      { name: 'empty', label: 'Nobody', units: ['A'], note: 'No jurisdiction qualifies.' },
    ])
    expect(r.pools[0]!.estimate).toBeCloseTo(32 / 7, 10)
    expect(r.pools[1]!.estimate).toBeCloseTo(32 / 7 - 2, 10)
    expect(r.pools[2]!.estimate).toBeNull()
    expect(r.pools[2]!.note).toBe('No jurisdiction qualifies.')
    expect(r.pools[0]!.method).toBe('permutation')
  })
})
