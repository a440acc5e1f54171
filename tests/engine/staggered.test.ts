// Design "staggered": group-time effects (Callaway and Sant'Anna 2021) against the reference
// case c5 (both comparison groups), an identity with the 2x2 difference-in-differences of the
// "did" design, the multiplier-bootstrap bands, unbalanced panels, refusals and timing.
import { describe, expect, it } from 'vitest'
import { groupTimeEffects, rademacherBits, supTCritical } from '../../server/engine/designs/staggered'
import { EngineError, estimate } from '../../server/engine/index'
import type { CsvRecord } from '../../server/engine/panel'
import type { EstimateResult } from '../../shared/engine/result'
import { type Expected, loadCase, fails } from './helpers'

const c5 = loadCase('c5_synthetic_cs_att_gt')
const records = (c5.panel as { records: CsvRecord[] }).records
const startMap: Record<string, number> = {}
for (const r of records) if (r.first_treated_period !== '0') startMap[String(r.unit)] = Number(r.first_treated_period)
const adopters = Object.keys(startMap).sort()
const neverUnits = [...new Set(records.map((r) => String(r.unit)))].filter((u) => !(u in startMap)).sort()

const staggeredSpec = (extra: Record<string, unknown> = {}) => ({ design: 'staggered', treated: adopters, start: startMap, inference: { draws: 999 }, ...extra })

/** c5's tolerance: relative 1e-10 on ATT and SE; absolute 1e-12 where the value is 0. */
function close(got: number, exp: number, label: string): void {
  const tol = exp === 0 ? 1e-12 : 1e-10 * Math.abs(exp)
  expect(Math.abs(got - exp), `${label}: got ${got}, expected ${exp}`).toBeLessThanOrEqual(tol)
}


/** The c5 panel as the dense input of groupTimeEffects (units sorted by id, periods 1..12). */
function c5Input(comparison: 'never' | 'not_yet') {
  const units = [...adopters, ...neverUnits].sort()
  const T = 12
  const y = new Float64Array(units.length * T)
  const index = new Map(units.map((u, i) => [u, i]))
  for (const r of records) y[index.get(String(r.unit))! * T + Number(r.period) - 1] = Number(r.outcome)
  const start = Float64Array.from(units, (u) => startMap[u] ?? NaN)
  return { y, nUnits: units.length, nPeriods: T, periodOrdinals: Float64Array.from({ length: T }, (_, t) => t + 1), start, comparison }
}

describe(`c5_synthetic_cs_att_gt: ${c5.source}`, () => {
  it('comes from general-purpose software (its README line names it)', () => expect(c5.source).toMatch(/R 4\.2\.2/))
  for (const [comparison, key] of [
    ['never', 'never_treated'],
    ['not_yet', 'not_yet_treated'],
  ] as const) {
    const e: Expected = c5.expected[key]
    describe(`comparison "${comparison}"`, () => {
      const r: EstimateResult = estimate(c5.panel, staggeredSpec({ staggered: { comparison } }))
      const s = r.staggered!

      it('every ATT(g,t) with its SE, counts and relative time', () => {
        expect(s.comparison).toBe(comparison)
        expect(s.groupTime).toHaveLength(e.att_gt.length)
        for (const x of e.att_gt) {
          const label = `ATT(${x.g},${x.t})`
          const cell = s.groupTime.find((c) => c.cohort === String(x.g) && c.period === String(x.t))
          expect(cell, label).toBeDefined()
          close(cell!.att, x.att, `${label} att`)
          close(cell!.se, x.se, `${label} se`)
          expect(cell!.relTime, `${label} e`).toBe(x.e)
          expect(cell!.nCohort, `${label} n_g`).toBe(x.n_g)
          expect(cell!.nComparison, `${label} n_c`).toBe(x.n_c)
          expect(cell!.post, `${label} post`).toBe(x.post)
        }
      })

      it('overall, by relative time and by cohort', () => {
        close(s.overall.estimate, e.overall.estimate, 'overall')
        close(s.overall.se, e.overall.se, 'overall se')
        expect(s.byRelTime.map((b) => b.relTime)).toEqual(e.event_time.map((x: Expected) => x.e))
        for (const x of e.event_time) {
          const b = s.byRelTime.find((q) => q.relTime === x.e)!
          close(b.estimate, x.estimate, `theta(${x.e})`)
          close(b.se, x.se, `theta(${x.e}) se`)
        }
        expect(s.byCohort.map((b) => b.cohort)).toEqual(e.by_cohort.map((x: Expected) => String(x.g)))
        for (const x of e.by_cohort) {
          const b = s.byCohort.find((q) => q.cohort === String(x.g))!
          close(b.estimate, x.estimate, `theta_${x.g}`)
          close(b.se, x.se, `theta_${x.g} se`)
        }
      })

      it('overall_by_cohort and the cohort counts (groupTimeEffects)', () => {
        const gt = groupTimeEffects(c5Input(comparison))
        close(gt.overallByCohort.estimate, e.overall_by_cohort.estimate, 'overall_by_cohort')
        close(gt.overallByCohort.se, e.overall_by_cohort.se, 'overall_by_cohort se')
        expect(gt.cohorts.map((c) => [c.start, c.size])).toEqual(Object.entries(c5.expected.cohort_sizes).map(([g, n]) => [Number(g), n]))
        for (const x of e.event_time) expect(gt.byRelTime.find((q) => q.relTime === x.e)!.nCohorts, `n_cohorts(${x.e})`).toBe(x.n_cohorts)
        for (const x of e.by_cohort) expect(gt.byCohort.find((q) => gt.cohorts[q.cohort].start === x.g)!.nPost).toBe(x.n_periods_post)
      })

      it('the headline: overall effect with a normal reference', () => {
        expect(r.effect.term).toBe('att_overall')
        close(r.effect.estimate, e.overall.estimate, 'effect')
        close(r.effect.se!, e.overall.se, 'effect se')
        expect(r.effect.df).toBeNull()
        expect(r.effect.t).toBeCloseTo(e.overall.estimate / e.overall.se, 12)
        // z(0.975) = 1.959963984540054 (standard normal quantile, from memory)
        expect(r.effect.ciLow).toBeCloseTo(e.overall.estimate - 1.959963984540054 * e.overall.se, 10)
        expect(r.effect.ciHigh).toBeCloseTo(e.overall.estimate + 1.959963984540054 * e.overall.se, 10)
        expect(r.effect.p).toBeLessThan(1e-30)
        expect(r.vcov).toBe('influence')
        expect(r.inference?.method).toBe('analytic')
        expect(r.nObs).toBe(c5.expected.n_obs)
        expect(r.nUnits).toBe(c5.expected.n_units)
        expect(r.nPeriods).toBe(c5.expected.n_periods)
        expect(r.nClusters).toBe(c5.expected.n_units)
        expect(r.warnings).toEqual([])
      })

      it('bands by relative time: sup-t, wider than pointwise, 0 at the base period', () => {
        for (const b of s.byRelTime) {
          expect(b.bandLow).toBeLessThanOrEqual(b.estimate)
          expect(b.bandHigh).toBeGreaterThanOrEqual(b.estimate)
          if (b.relTime === -1) expect([b.estimate, b.se, b.bandLow, b.bandHigh]).toEqual([0, 0, 0, 0])
          else expect((b.bandHigh! - b.estimate) / b.se).toBeGreaterThan(1.96)
        }
      })
    })
  }

  it('a different level changes the interval, not the estimate', () => {
    const r90 = estimate(c5.panel, staggeredSpec({ inference: { draws: 199, level: 0.9 } }))
    const e = c5.expected.never_treated.overall
    // z(0.95) = 1.6448536269514722 (from memory)
    expect(r90.effect.ciHigh! - r90.effect.estimate).toBeCloseTo(1.6448536269514722 * e.se, 10)
  })
})

describe('identity with the 2x2 difference-in-differences', () => {
  // one cohort (first treated in 8) and the never-treated units: ATT(8, t) is the 2x2 DiD of
  // that cohort against the never treated between the base period 7 and t
  const g = 8
  const cohort = adopters.filter((u) => startMap[u] === g)
  const subset = { records: records.filter((r) => cohort.includes(String(r.unit)) || neverUnits.includes(String(r.unit))) }
  const r = estimate(subset, { design: 'staggered', treated: cohort, start: g, inference: { draws: 99 } })
  const cells = r.staggered!.groupTime
  it('holds in every post period (window pre [7, 7], post [t, t])', () => {
    for (let t = g; t <= 12; t++) {
      const did = estimate(subset, { design: 'did', did: { form: '2x2' }, treated: cohort, start: g, window: { pre: [g - 1, g - 1], post: [t, t] }, inference: { method: 'analytic' } })
      const cell = cells.find((c) => c.period === String(t))!
      expect(Math.abs(cell.att - did.groupMeans!.did), `t = ${t}`).toBeLessThan(1e-12)
      expect(Math.abs(cell.att - did.effect.estimate), `t = ${t}`).toBeLessThan(1e-10)
    }
  })
  it('and, with the roles of the two periods swapped, in every pre period', () => {
    // window pre [t, t], post [7, 7] with start 7 gives the DiD from t to 7, i.e. -ATT(8, t)
    for (let t = 1; t < g - 1; t++) {
      const did = estimate(subset, { design: 'did', did: { form: '2x2' }, treated: cohort, start: g - 1, window: { pre: [t, t], post: [g - 1, g - 1] }, inference: { method: 'analytic' } })
      const cell = cells.find((c) => c.period === String(t))!
      expect(Math.abs(cell.att + did.groupMeans!.did), `t = ${t}`).toBeLessThan(1e-12)
    }
  })
  it('and the overall effect equals the cohort mean of its post cells', () => {
    const post = cells.filter((c) => c.post)
    expect(r.effect.estimate).toBeCloseTo(post.reduce((s, c) => s + c.att, 0) / post.length, 12)
    expect(r.staggered!.byCohort).toHaveLength(1)
    expect(r.staggered!.byCohort[0].estimate).toBeCloseTo(r.effect.estimate, 12)
  })
})

describe('multiplier bootstrap', () => {
  interface SupTInput {
    influence: Float64Array
    nUnits: number
    se: number[]
    draws: number
    seed: number
    level: number
  }
  /** The plain sum over units with the same signs: max_k |sum_i v_i psi_ik| / se_k per draw. */
  function naiveCritical({ influence, nUnits, se, draws, seed, level }: SupTInput): number {
    const { bits, words } = rademacherBits(nUnits, draws, seed)
    const K = se.length
    const stats: number[] = []
    for (let b = 0; b < draws; b++) {
      let mx = 0
      for (let k = 0; k < K; k++) {
        if (!(se[k] > 0)) continue
        let s = 0
        for (let i = 0; i < nUnits; i++) s += ((bits[b * words + (i >>> 5)] >>> (i & 31)) & 1 ? 1 : -1) * influence[k * nUnits + i]
        mx = Math.max(mx, Math.abs(s) / se[k])
      }
      stats.push(mx)
    }
    stats.sort((a, b) => a - b)
    return stats[Math.ceil(level * draws) - 1]
  }

  it('the table-based sums equal the plain sums (units not a multiple of 8 or 32)', () => {
    const gt = groupTimeEffects(c5Input('not_yet'))
    const input = { influence: gt.relTimeInfluence, nUnits: 40, se: gt.byRelTime.map((b) => b.se), draws: 1500, seed: 7, level: 0.95 }
    expect(supTCritical(input.influence, input.nUnits, input.se, input)).toBeCloseTo(naiveCritical(input), 12)
    // 37 units: a last block of 5 and a second 32-bit word
    const keep = 37
    const K = input.se.length
    const influence = new Float64Array(keep * K)
    for (let k = 0; k < K; k++) for (let i = 0; i < keep; i++) influence[k * keep + i] = input.influence[k * 40 + i]
    const se = Array.from({ length: K }, (_, k) => Math.sqrt(Array.from({ length: keep }, (_, i) => influence[k * keep + i] ** 2).reduce((a, b) => a + b, 0)))
    const small = { influence, nUnits: keep, se, draws: 999, seed: 3, level: 0.9 }
    expect(supTCritical(influence, keep, se, small)).toBeCloseTo(naiveCritical(small), 12)
  })

  it('is reproducible with its seed and moves with another seed', () => {
    const a = estimate(c5.panel, staggeredSpec({ inference: { method: 'analytic', draws: 499, seed: 11 } }))
    const b = estimate(c5.panel, staggeredSpec({ inference: { method: 'analytic', draws: 499, seed: 11 } }))
    const c = estimate(c5.panel, staggeredSpec({ inference: { method: 'analytic', draws: 499, seed: 12 } }))
    expect(a.staggered!.byRelTime).toEqual(b.staggered!.byRelTime)
    expect(a.staggered!.byRelTime.map((x) => x.bandHigh)).not.toEqual(c.staggered!.byRelTime.map((x) => x.bandHigh))
    expect(a.inference!.reason).toMatch(/sup-t critical value \d\.\d{3} from 499 Rademacher multiplier draws \(seed 11\)/)
  })

  it('sup-t over independent standard normal columns: the critical value of the maximum', () => {
    // 200 units, 5 columns with disjoint support: the sup of 5 independent |N(0,1)| has its
    // 95% point at z((1 + 0.95^(1/5))/2) = 2.5688 (normal quantile, computed with @stdlib); the
    // multipliers make the sums only approximately normal, hence the loose bounds
    const n = 200
    const K = 5
    const influence = new Float64Array(n * K)
    for (let i = 0; i < n; i++) influence[(i % K) * n + i] = ((i * 7919) % 13) - 6
    const se = Array.from({ length: K }, (_, k) => Math.sqrt(Array.from({ length: n }, (_, i) => influence[k * n + i] ** 2).reduce((a, b) => a + b, 0)))
    const c = supTCritical(influence, n, se, { draws: 20000, seed: 1, level: 0.95 })
    expect(c).toBeGreaterThan(2.45)
    expect(c).toBeLessThan(2.7)
  })
})

describe('unbalanced panels', () => {
  it('a unit missing a period leaves only the cells that need that period, with a warning naming it', () => {
    // u01 (cohort 5) has no row in period 4 (its base period) and u30 (never) none in period 9
    const holes = { records: records.filter((r) => !(r.unit === 'u01' && r.period === '4') && !(r.unit === 'u30' && r.period === '9')) }
    const r = estimate(holes, staggeredSpec())
    const full = estimate(c5.panel, staggeredSpec())
    const cell = (res: EstimateResult, g: number, t: number) => res.staggered!.groupTime.find((c) => c.cohort === String(g) && c.period === String(t))!
    // cohort 5: every cell loses u01 (its base period is missing)
    for (let t = 1; t <= 12; t++) expect(cell(r, 5, t).nCohort).toBe(7)
    // cohort 8: u30 is left out of the cell (8, 9) only
    expect(cell(r, 8, 9).nComparison).toBe(15)
    expect(cell(r, 8, 10).nComparison).toBe(16)
    expect(cell(r, 8, 10).att).toBeCloseTo(cell(full, 8, 10).att, 12)
    // by hand: ATT(5, 6) without u01 = mean over the other 7 of the change minus the comparison mean change
    const y = (u: string, t: number) => Number(records.find((q) => q.unit === u && q.period === String(t))!.outcome)
    const members = adopters.filter((u) => startMap[u] === 5 && u !== 'u01')
    const mean = (us: string[]) => us.reduce((s, u) => s + y(u, 6) - y(u, 4), 0) / us.length
    expect(cell(r, 5, 6).att).toBeCloseTo(mean(members) - mean(neverUnits), 12)
    expect(r.warnings.join(' ')).toMatch(/unbalanced panel: units "u01", "u30" lack a value in some periods; each is left out of the group-time cells whose period or base period it lacks/)
    // the aggregation weights stay the cohort sizes
    const post = r.staggered!.groupTime.filter((c) => c.post)
    const w = (c: { cohort: string }) => adopters.filter((u) => String(startMap[u]) === c.cohort).length
    expect(r.staggered!.overall.estimate).toBeCloseTo(post.reduce((s, c) => s + w(c) * c.att, 0) / post.reduce((s, c) => s + w(c), 0), 12)
  })

  it('cells with gaps take the unit-by-unit route and agree with the complete-data route', () => {
    // an extra never-treated unit with no value at all: every comparison group is incomplete,
    // so every cell is computed unit by unit, yet nothing may change
    for (const comparison of ['never', 'not_yet'] as const) {
      const base = c5Input(comparison)
      const T = base.nPeriods
      const y = new Float64Array((base.nUnits + 1) * T).fill(NaN)
      y.set(base.y)
      const start = Float64Array.from([...base.start, NaN])
      const a = groupTimeEffects(base)
      const b = groupTimeEffects({ ...base, y, nUnits: base.nUnits + 1, start })
      expect(b.incompleteUnits).toEqual([base.nUnits])
      expect(b.cells.map((c) => [c.nCohort, c.nComparison])).toEqual(a.cells.map((c) => [c.nCohort, c.nComparison]))
      b.cells.forEach((c, i) => {
        expect(Math.abs(c.att - a.cells[i].att)).toBeLessThan(1e-13)
        expect(Math.abs(c.se - a.cells[i].se)).toBeLessThan(1e-13)
      })
      expect(Math.abs(b.overall.se - a.overall.se)).toBeLessThan(1e-13)
      b.byRelTime.forEach((r, i) => expect(Math.abs(r.se - a.byRelTime[i].se)).toBeLessThan(1e-13))
    }
  })

  it('a missing outcome value counts as a missing period', () => {
    const blank = { records: records.map((r) => (r.unit === 'u09' && r.period === '7' ? { ...r, outcome: '' } : r)) }
    const r = estimate(blank, staggeredSpec())
    expect(r.warnings.join(' ')).toMatch(/dropped 1 row with missing values/)
    expect(r.warnings.join(' ')).toMatch(/unit "u09" lacks a value/)
    expect(r.staggered!.groupTime.find((c) => c.cohort === '8' && c.period === '9')!.nCohort).toBe(7)
  })

  it('not_yet without never-treated units: the last cohort only compares, cells with no comparison are left out', () => {
    const noNever = { records: records.filter((r) => r.first_treated_period !== '0') }
    const r = estimate(noNever, staggeredSpec({ staggered: { comparison: 'not_yet' } }))
    const cells = r.staggered!.groupTime
    // cohort 10 has no comparison unit at its base period 9: no effects, but it compares for 5 and 8
    expect([...new Set(cells.map((c) => c.cohort))]).toEqual(['5', '8'])
    const cell = (g: number, t: number) => cells.find((c) => c.cohort === String(g) && c.period === String(t))
    expect(cell(5, 4)!.nComparison).toBe(16)
    expect(cell(5, 7)!.nComparison).toBe(16)
    expect(cell(5, 8)!.nComparison).toBe(8)
    expect(cell(8, 9)!.nComparison).toBe(8)
    for (const t of [10, 11, 12]) {
      expect(cell(5, t)).toBeUndefined()
      expect(cell(8, t)).toBeUndefined()
    }
    // by hand: ATT(5, 8) against cohort 10, the only units not yet treated in period 8
    const y = (u: string, t: number) => Number(records.find((q) => q.unit === u && q.period === String(t))!.outcome)
    const mean = (us: string[], t: number) => us.reduce((s, u) => s + y(u, t) - y(u, 4), 0) / us.length
    const of = (g: number) => adopters.filter((u) => startMap[u] === g)
    expect(cell(5, 8)!.att).toBeCloseTo(mean(of(5), 8) - mean(of(10), 8), 12)
    const text = r.warnings.join(' ')
    expect(text).toMatch(/the cohort first treated in 10 has no comparison units at its base period .* its units still serve as not-yet-treated comparisons/)
    expect(text).toMatch(/6 group-time cells \(cohort\/period\) could not be estimated .*"5\/10", "5\/11", "5\/12", "8\/10", "8\/11", "8\/12"/)
    // one cohort and nobody to compare with
    const one = adopters.filter((u) => startMap[u] === 5)
    fails(
      () => estimate({ records: records.filter((r) => r.first_treated_period === '5') }, staggeredSpec({ treated: one, start: 5, staggered: { comparison: 'not_yet' } })),
      'invalid_spec',
      /no cohort has comparison units at its base period/,
    )
  })
})

describe('comparison pool', () => {
  it('spec.comparison names the never-treated pool; other units are left out', () => {
    const pool = neverUnits.slice(0, 8)
    const r = estimate(c5.panel, staggeredSpec({ comparison: pool }))
    expect(new Set(r.staggered!.groupTime.map((c) => c.nComparison))).toEqual(new Set([8]))
    expect(r.nUnits).toBe(24 + 8)
    const y = (u: string, t: number) => Number(records.find((q) => q.unit === u && q.period === String(t))!.outcome)
    const mean = (us: string[]) => us.reduce((s, u) => s + y(u, 12) - y(u, 9), 0) / us.length
    const cell = r.staggered!.groupTime.find((c) => c.cohort === '10' && c.period === '12')!
    expect(cell.att).toBeCloseTo(mean(adopters.filter((u) => startMap[u] === 10)) - mean(pool), 12)
  })
})

describe('warnings', () => {
  it('pre-period effects outside the simultaneous band put parallel trends in doubt', () => {
    // cohort 5 gets its own trend of 0.6 per period: its pre-period cells drift away from zero
    const drift = { records: records.map((r) => (r.first_treated_period === '5' ? { ...r, outcome: String(Number(r.outcome) + 0.6 * Number(r.period)) } : r)) }
    const r = estimate(drift, staggeredSpec())
    expect(r.warnings.join(' ')).toMatch(/before adoption the cohorts already drift from their comparison units: the 95% simultaneous band excludes zero at relative times? -4.*parallel-trends assumption .* in doubt/)
    expect(estimate(c5.panel, staggeredSpec()).warnings.join(' ')).not.toMatch(/drift/)
  })
  it('few treated units', () => {
    const few = adopters.filter((u) => startMap[u] === 8).slice(0, 3)
    const r = estimate({ records: records.filter((q) => few.includes(String(q.unit)) || neverUnits.includes(String(q.unit))) }, staggeredSpec({ treated: few, start: 8 }))
    expect(r.warnings.join(' ')).toMatch(/only 3 treated units: influence-function errors are a large-sample approximation and may be too small/)
  })
})

describe('refusals', () => {
  it('no never-treated units when "never" is asked', () => {
    const noNever = { records: records.filter((r) => r.first_treated_period !== '0') }
    fails(() => estimate(noNever, staggeredSpec()), 'invalid_spec', /comparison "never" needs never-treated units, but every unit in the sample is treated; use staggered\.comparison "not_yet"/)
  })
  it('a start map naming units that are not in the panel', () => {
    fails(() => estimate(c5.panel, staggeredSpec({ start: { ...startMap, zz9: 5 } })), 'unknown_unit', /unknown unit "zz9" in start/)
    fails(() => estimate(c5.panel, staggeredSpec({ treated: [...adopters, 'zz9'], start: { ...startMap, zz9: 5 } })), 'unknown_unit', /unknown unit "zz9"/)
  })
  it('a cohort with no base period', () => {
    fails(() => estimate(c5.panel, staggeredSpec({ start: { ...startMap, u01: 1 } })), 'no_pre_periods', /cohort first treated in 1 \(1 unit\) starts in the panel's first period, so it has no base period 0/)
    const gap = { records: records.filter((r) => r.period !== '7') }
    fails(() => estimate(gap, staggeredSpec()), 'no_pre_periods', /the base period 7 of the cohort first treated in 8 is not in the panel/)
  })
  it('a cohort with no comparison units at its base period', () => {
    // the never-treated units have no row in period 4, the base period of cohort 5
    const hole = { records: records.filter((r) => !(r.first_treated_period === '0' && r.period === '4')) }
    fails(() => estimate(hole, staggeredSpec()), 'invalid_spec', /cohort first treated in 5 has no comparison units at its base period 4; add never-treated units or use staggered\.comparison "not_yet"/)
  })
  it('options the design does not take', () => {
    fails(() => estimate(c5.panel, staggeredSpec({ inference: { method: 'wild_bootstrap' } })), 'invalid_spec', /inference\.method "wild_bootstrap" is not available for design "staggered"/)
    fails(() => estimate(c5.panel, staggeredSpec({ covariates: ['d'] })), 'invalid_spec', /without covariates/)
    fails(() => estimate(c5.panel, staggeredSpec({ window: { pre: [1, 4], post: [5, 12] } })), 'invalid_spec', /remove the window/)
    fails(() => estimate(c5.panel, { design: 'staggered', treated: adopters }), 'invalid_spec', /needs the first treated period/)
    fails(() => estimate(c5.panel, { design: 'staggered', staggered: { comparison: 'later' } }), 'invalid_spec', /spec\.staggered\.comparison/)
  })
  it('a cohort starting after the last period only serves as a comparison', () => {
    const r = estimate(c5.panel, staggeredSpec({ start: { ...startMap, u17: 20 }, staggered: { comparison: 'not_yet' } }))
    expect(r.staggered!.byCohort.map((c) => c.cohort)).toEqual(['5', '8', '10'])
    expect(r.warnings.join(' ')).toMatch(/first treated after the last period \(20 \(1 unit\)\).*serve only as not-yet-treated comparisons/)
  })
})

describe('timing', () => {
  it('group-time effects on 3,000 units x 240 periods with 20 cohorts', () => {
    const N = 3000
    const T = 240
    const y = new Float64Array(N * T)
    const start = new Float64Array(N)
    let a = 1
    const rnd = () => (a = (a * 16807) % 2147483647) / 2147483647
    for (let u = 0; u < N; u++) {
      start[u] = u < 2000 ? 100 + 5 * (u % 20) : NaN
      const level = 50 + 10 * rnd()
      for (let t = 0; t < T; t++) y[u * T + t] = level + Math.sin(t / 5) + (t + 1 >= start[u] ? 2 : 0) + rnd() - 0.5
    }
    const input = { y, nUnits: N, nPeriods: T, periodOrdinals: Float64Array.from({ length: T }, (_, t) => t + 1), start, comparison: 'never' as const }
    groupTimeEffects(input)
    const t0 = performance.now()
    const gt = groupTimeEffects(input)
    const ms = performance.now() - t0
    console.log(`group-time effects, 3,000 units x 240 periods, 20 cohorts: ${ms.toFixed(0)} ms`)
    expect(gt.cells).toHaveLength(20 * 240)
    expect(gt.overall.estimate).toBeCloseTo(2, 1)
    expect(ms).toBeLessThan(5000)
  })
})
