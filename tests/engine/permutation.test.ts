// Placebo-in-space inference (server/engine/inference/permutation.ts and apply.ts).
// Reference: shared checks c3_gasoline_placebo_space: "plm 2.6.2 dataset Gasoline (Baltagi &
// Griffin 1983: 18 OECD countries x 1960-1978, balanced); made-up intervention in NORWAY from
// 1973; donors = the other 17 countries. Computed by hand in R 4.2.2 (base R means),
// cross-checked in numpy." Calibration: the public Fatalities panel of the shared checks (a1,
// AER 1.2.10, 48 US states x 1982-1988), every state in turn a fake single adopter.
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { estimate } from '../../server/engine/index'
import { permutationOutcome, placeboSets } from '../../server/engine/inference/permutation'
import { seededRandom } from '../../server/engine/random'
import type { CsvRecord } from '../../server/engine/panel'
import { type Expected, loadCase, near } from './helpers'

const c3 = loadCase('c3_gasoline_placebo_space')
const e: Expected = c3.expected
const records = (c3.panel as { records: CsvRecord[] }).records

describe(`placebo in space: ${c3.source.slice(0, 60)}...`, () => {
  const spec = { design: 'did', treated: ['NORWAY'], start: 1973, inference: { method: 'permutation' } } as const
  const r = estimate(c3.panel, spec)

  it('matches every unit effect, ratio and both p-values of c3', () => {
    expect(r.inference?.method).toBe('permutation')
    near(r.effect.estimate, e.treated.effect, 'treated effect')
    near(r.inference!.ratio!, e.treated.ratio, 'treated ratio')
    expect(r.inference!.draws).toBe(e.n_units_permutation - 1)
    expect(Math.abs(r.inference!.p - e.p_effect)).toBeLessThanOrEqual(1e-15)
    expect(Math.abs(r.inference!.pRatio! - e.p_ratio)).toBeLessThanOrEqual(1e-15)
    expect(r.effect.p).toBe(r.inference!.p)
    for (const u of e.units.filter((x: Expected) => !x.is_treated)) {
      const pl = r.inference!.placebos!.find((p) => p.unit === u.unit)!
      near(pl.estimate, u.effect, `${u.unit} effect`)
      near(pl.ratio!, u.ratio, `${u.unit} ratio`)
      const path = r.inference!.gaps!.placebos.find((g) => g.unit === u.unit)!.gap
      u.gap.forEach((g: number, t: number) => near(path[t]!, g - u.pre_mean_gap, `${u.unit} demeaned gap ${t}`))
    }
  })

  it('the fast path equals a full re-estimate of every placebo', () => {
    for (const pl of r.inference!.placebos!) {
      const others = e.spec.donors.filter((d: string) => d !== pl.unit)
      const alone = estimate(c3.panel, { design: 'did', treated: [pl.unit], comparison: others, start: 1973, inference: { method: 'analytic' } })
      expect(Math.abs(alone.effect.estimate - pl.estimate)).toBeLessThan(1e-10)
    }
  })

  it('an unbalanced panel takes the re-estimate path and gives the same kind of answer', () => {
    const drop = records.filter((row) => !(row.unit === 'SPAIN' && row.period === '1961'))
    const u = estimate({ records: drop }, spec)
    expect(u.inference!.placebos).toHaveLength(17)
    const spain = estimate({ records: drop }, { design: 'did', treated: ['SPAIN'], comparison: e.spec.donors.filter((d: string) => d !== 'SPAIN'), start: 1973, inference: { method: 'analytic' } })
    expect(u.inference!.placebos!.find((p) => p.unit === 'SPAIN')!.estimate).toBeCloseTo(spain.effect.estimate, 12)
  })

  it('with 17 placebos no 95% interval can be bounded, and the result says so', () => {
    expect(r.inference!.ciLow).toBeNull()
    expect(r.inference!.pMin).toBeCloseTo(1 / 18, 15)
    expect(r.warnings.join(' ')).toMatch(/smallest possible p-value is 1\/18/)
  })

  it('the interval inverts the test: p(tau) crosses 1 - level at its bounds', () => {
    const lv = 0.8
    const r80 = estimate(c3.panel, { ...spec, inference: { method: 'permutation', level: lv } })
    const { ciLow, ciHigh } = r80.inference!
    expect(ciLow).not.toBeNull()
    const pAt = (tau: number) => {
      const shifted = records.map((row) => (row.unit === 'NORWAY' && Number(row.period) >= 1973 ? { ...row, outcome: String(Number(row.outcome) - tau) } : row))
      return estimate({ records: shifted }, { ...spec, inference: { method: 'permutation', level: lv } }).inference!.p
    }
    const eps = 1e-7
    expect(pAt(ciLow! + eps)).toBeGreaterThan(1 - lv)
    expect(pAt(ciLow! - eps)).toBeLessThanOrEqual(1 - lv)
    expect(pAt(ciHigh! - eps)).toBeGreaterThan(1 - lv)
    expect(pAt(ciHigh! + eps)).toBeLessThanOrEqual(1 - lv)
  })
})

describe('placebo sets', () => {
  it('enumerates every k-subset when there are at most `draws`, else draws them with the seed', () => {
    const all = placeboSets(6, 2, 100, seededRandom(1))
    expect(all.enumerated).toBe(true)
    expect(all.sets).toHaveLength(15)
    expect(new Set(all.sets.map((s) => s.join(','))).size).toBe(15)
    const some = placeboSets(40, 3, 200, seededRandom(7))
    expect(some.enumerated).toBe(false)
    expect(some.sets).toHaveLength(200)
    expect(some.sets.every((s) => new Set(s).size === 3 && s.every((j) => j >= 0 && j < 40))).toBe(true)
    expect(placeboSets(40, 3, 200, seededRandom(7)).sets).toEqual(some.sets)
    expect(placeboSets(40, 3, 200, seededRandom(8)).sets).not.toEqual(some.sets)
  })

  it('p lies in (0, 1] and never below 1/(n + 1)', () => {
    fc.assert(
      fc.property(fc.double({ min: -5, max: 5, noNaN: true }), fc.array(fc.double({ min: -5, max: 5, noNaN: true }), { minLength: 1, maxLength: 40 }), (actual, pl) => {
        const out = permutationOutcome({ estimate: actual, ratio: null }, pl.map((x, i) => ({ unit: `u${i}`, estimate: x, ratio: null })), 0.95)
        return out.p > 0 && out.p <= 1 && out.p >= 1 / (pl.length + 1) - 1e-15
      }),
      { numRuns: 200 },
    )
  })
})

describe('permutation inference: invariances (fast-check)', () => {
  const base = estimate(c3.panel, { design: 'did', treated: ['NORWAY'], start: 1973 })
  it('does not depend on row order', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 31 }), (seed) => {
        const rng = seededRandom(seed)
        const shuffled = [...records]
        for (let i = shuffled.length - 1; i > 0; i--) {
          const j = rng.int(i + 1)
          ;[shuffled[i], shuffled[j]] = [shuffled[j]!, shuffled[i]!]
        }
        const r = estimate({ records: shuffled }, { design: 'did', treated: ['NORWAY'], start: 1973 })
        return r.inference!.p === base.inference!.p && Math.abs(r.effect.estimate - base.effect.estimate) < 1e-12
      }),
      { numRuns: 5 },
    )
  })
  it('does not change when a constant is added to one unit', () => {
    fc.assert(
      fc.property(fc.constantFrom(...e.spec.donors, 'NORWAY'), fc.double({ min: -3, max: 3, noNaN: true }), (unit: string, c: number) => {
        const moved = records.map((row) => (row.unit === unit ? { ...row, outcome: String(Number(row.outcome) + c) } : row))
        const r = estimate({ records: moved }, { design: 'did', treated: ['NORWAY'], start: 1973 })
        return r.inference!.p === base.inference!.p && r.inference!.pRatio === base.inference!.pRatio
      }),
      { numRuns: 8 },
    )
  })
})
