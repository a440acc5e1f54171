// Goodman-Bacon (2021) decomposition of the two-way fixed-effects estimate: the reference case
// c6 (every 2x2 estimate and weight), the identities sum(weights) = 1 and sum(w * estimate) =
// the two-way estimate on random panels (against the engine's own regression), the warning
// about already-treated comparisons, refusals and timing.
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { type BaconInput, alreadyTreatedWarning, baconDecomposition, denseStart } from '../../server/engine/bacon'
import { EngineError, estimate } from '../../server/engine/index'
import type { CsvRecord } from '../../server/engine/panel'
import { fitLinearModel } from '../../server/engine/regression'
import type { DecompositionRow } from '../../shared/engine/result'
import { type Expected, loadCase, fails } from './helpers'

const c6 = loadCase('c6_synthetic_bacon')
const records = (c6.panel as { records: CsvRecord[] }).records

/** c6 as dense arrays: units sorted by id, periods 1..12 as indices 0..11, start index = first_treated_period - 1. */
function c6Input(): BaconInput {
  const units = [...new Set(records.map((r) => String(r.unit)))].sort()
  const index = new Map(units.map((u, i) => [u, i]))
  const n = records.length
  const input: BaconInput = {
    y: new Float64Array(n),
    unit: new Int32Array(n),
    nUnits: units.length,
    period: new Int32Array(n),
    nPeriods: 12,
    start: new Float64Array(units.length).fill(NaN),
    label: (k) => String(k + 1),
  }
  records.forEach((r, i) => {
    const u = index.get(String(r.unit))!
    input.y[i] = Number(r.outcome)
    input.unit[i] = u
    input.period[i] = Number(r.period) - 1
    if (r.first_treated_period !== '0') input.start[u] = Number(r.first_treated_period) - 1
  })
  return input
}

/** c6's tolerance: relative 1e-9 on estimates and weights. */
function close(got: number, exp: number, label: string): void {
  expect(Math.abs(got - exp), `${label}: got ${got}, expected ${exp}`).toBeLessThanOrEqual(1e-9 * Math.abs(exp))
}

const sum = (rows: DecompositionRow[], f: (r: DecompositionRow) => number) => rows.reduce((s, r) => s + f(r), 0)


describe(`c6_synthetic_bacon: ${c6.source}`, () => {
  it('comes from general-purpose software (its README line names it)', () => expect(c6.source).toMatch(/R 4\.2\.2/))
  const e: Expected = c6.expected
  const r = baconDecomposition(c6Input())

  it('every 2x2 comparison: type, groups, estimate and weight', () => {
    expect(r.rows).toHaveLength(e.comparisons.length)
    e.comparisons.forEach((x: Expected, i: number) => {
      const row = r.rows[i]
      const label = `${x.type} ${x.treated} vs ${x.control}`
      expect([row.type, row.treated, row.control], label).toEqual([x.type, String(x.treated), x.control === 0 ? 'never' : String(x.control)])
      close(row.estimate, x.estimate, `${label} estimate`)
      close(row.weight, x.weight, `${label} weight`)
    })
  })

  it('groups, V_D, the two-way estimate and the totals by type', () => {
    close(r.twfe, e.twfe_beta, 'twfe beta')
    close(r.varianceD, e.var_D_demeaned, 'V_D')
    for (const g of e.groups) {
      const ours = r.groups.find((q) => (g.first_treated_period === 0 ? q.start === 12 : q.start === g.first_treated_period - 1))!
      expect(ours.nUnits).toBe(g.n_units)
      close(ours.share, g.share, 'share')
      if (g.dbar === 0) expect(ours.dbar).toBe(0)
      else close(ours.dbar, g.dbar, 'dbar')
    }
    for (const t of e.by_type) {
      const rows = r.rows.filter((q) => q.type === t.type)
      const w = sum(rows, (q) => q.weight)
      close(w, t.weight, `${t.type} weight`)
      close(sum(rows, (q) => q.weight * q.estimate) / w, t.estimate, `${t.type} estimate`)
    }
  })

  it('weights sum to 1 and the weighted sum is the two-way estimate of design "did" (1e-10)', () => {
    expect(Math.abs(sum(r.rows, (q) => q.weight) - 1)).toBeLessThan(1e-10)
    const weighted = sum(r.rows, (q) => q.weight * q.estimate)
    expect(Math.abs(weighted - r.twfe)).toBeLessThan(1e-10)
    const start: Record<string, number> = {}
    for (const x of records) if (x.first_treated_period !== '0') start[String(x.unit)] = Number(x.first_treated_period)
    const did = estimate(c6.panel, { design: 'did', treated: Object.keys(start), start, inference: { method: 'analytic' } })
    expect(Math.abs(weighted - did.effect.estimate)).toBeLessThan(1e-10)
    close(did.effect.estimate, e.twfe_beta, 'did twfe')
    // the did design attaches the same decomposition to its result, with the caution
    expect(did.decomposition).toHaveLength(r.rows.length)
    did.decomposition!.forEach((q, i) => {
      expect(q.type).toBe(r.rows[i]!.type)
      close(q.estimate, r.rows[i]!.estimate, `did decomposition ${i} estimate`)
      close(q.weight, r.rows[i]!.weight, `did decomposition ${i} weight`)
    })
    expect(did.warnings.join(' ')).toMatch(/already-treated/)
  })

  it('warns about the weight of already-treated comparisons, in plain words', () => {
    const text = alreadyTreatedWarning(r.rows)
    // 0.0555... + 0.0555... + 0.0222... = 0.1333... (c6 by_type)
    expect(text).toMatch(/^13\.3% of the two-way estimate's weight comes from 3 comparisons that use already-treated units as the comparison group \(their weighted estimate: 0\.3918\)/)
    expect(text).toMatch(/design "staggered"/)
    expect(alreadyTreatedWarning(r.rows.filter((q) => q.type !== 'later_vs_earlier'))).toBeNull()
  })
})

/** A random balanced panel: units in timing groups (start index per group, NaN never, 0 always treated). */
const panelArb = fc
  .record({
    T: fc.integer({ min: 3, max: 9 }),
    groups: fc.array(fc.record({ size: fc.integer({ min: 1, max: 4 }), start: fc.option(fc.integer({ min: 0, max: 10 }), { nil: null }) }), { minLength: 2, maxLength: 5 }),
    seed: fc.integer({ min: 1, max: 1_000_000 }),
  })
  .map(({ T, groups, seed }) => {
    let a = seed
    const rnd = () => (a = (a * 16807) % 2147483647) / 2147483647
    const start: number[] = []
    for (const g of groups) for (let i = 0; i < g.size; i++) start.push(g.start === null ? NaN : g.start)
    const N = start.length
    const input: BaconInput = { y: new Float64Array(N * T), unit: new Int32Array(N * T), nUnits: N, period: new Int32Array(N * T), nPeriods: T, start: Float64Array.from(start) }
    for (let u = 0; u < N; u++) {
      for (let t = 0; t < T; t++) {
        const i = u * T + t
        input.unit[i] = u
        input.period[i] = t
        // effects that grow with time since adoption make the comparisons disagree
        input.y[i] = 3 * rnd() + 0.2 * u + 0.5 * t + (t >= start[u] ? 1 + 0.4 * (t - start[u]) : 0)
      }
    }
    return input
  })

/** Two-way fixed-effects estimate by the engine's regression (within transformation). */
function twfeByRegression(input: BaconInput): number {
  const d = new Float64Array(input.y.length)
  for (let i = 0; i < d.length; i++) d[i] = input.period[i] >= input.start[input.unit[i]] ? 1 : 0
  const fit = fitLinearModel({
    y: input.y,
    terms: [{ name: 'd', values: d }],
    intercept: false,
    absorb: { unit: input.unit, nUnits: input.nUnits, period: input.period, nPeriods: input.nPeriods },
    covariance: { kind: 'iid' },
  })
  return fit.beta[0]
}

describe('identities on random balanced panels', () => {
  it('weights sum to 1 and the weighted 2x2 estimates give the two-way estimate (always- and never-treated groups included)', () => {
    let checked = 0
    fc.assert(
      fc.property(panelArb, (input) => {
        let r
        try {
          r = baconDecomposition(input)
        } catch (e) {
          // no variation in the treatment: every unit adopts together, or none within the panel
          if (e instanceof EngineError && e.code === 'singular_design') return
          throw e
        }
        expect(Math.abs(sum(r.rows, (q) => q.weight) - 1)).toBeLessThan(1e-10)
        expect(Math.abs(sum(r.rows, (q) => q.weight * q.estimate) - r.twfe)).toBeLessThan(1e-10)
        expect(Math.abs(r.twfe - twfeByRegression(input))).toBeLessThan(1e-8 * (1 + Math.abs(r.twfe)))
        for (const row of r.rows) expect(row.weight).toBeGreaterThan(0)
        checked++
      }),
      { numRuns: 60, seed: 20240702 },
    )
    expect(checked).toBeGreaterThan(30)
  })

  it('one timing group against the never treated: a single 2x2 with weight 1', () => {
    const input = c6Input()
    const keep = Array.from({ length: input.nUnits }, (_, u) => Number.isNaN(input.start[u]) || input.start[u] === 4)
    const units = keep.map((k, u) => (k ? u : -1)).filter((u) => u >= 0)
    const remap = new Map(units.map((u, i) => [u, i]))
    const rows = Array.from(input.y.keys()).filter((i) => keep[input.unit[i]])
    const r = baconDecomposition({
      y: Float64Array.from(rows, (i) => input.y[i]),
      unit: Int32Array.from(rows, (i) => remap.get(input.unit[i])!),
      nUnits: units.length,
      period: Int32Array.from(rows, (i) => input.period[i]),
      nPeriods: 12,
      start: Float64Array.from(units, (u) => input.start[u]),
    })
    expect(r.rows).toHaveLength(1)
    expect(r.rows[0]).toMatchObject({ type: 'treated_vs_never', treated: '4', control: 'never' })
    expect(r.rows[0].weight).toBeCloseTo(1, 12)
    expect(r.rows[0].estimate).toBeCloseTo(r.twfe, 12)
    close(r.rows[0].estimate, c6.expected.comparisons[0].estimate, 'the same 2x2 as in the full panel')
    expect(alreadyTreatedWarning(r.rows)).toBeNull()
  })
})

describe('helpers and refusals', () => {
  it('denseStart maps a start to the first period at or after it', () => {
    const ords = [1990, 1991, 1993, 1994]
    expect(denseStart(ords, 1991)).toBe(1)
    expect(denseStart(ords, 1992)).toBe(2)
    expect(denseStart(ords, 1980)).toBe(0)
    expect(denseStart(ords, 2000)).toBe(4)
    expect(denseStart(ords, NaN)).toBeNaN()
  })

  it('an unbalanced panel is refused with a reason', () => {
    const input = c6Input()
    const drop = (i: number) => i !== 17
    fails(
      () => baconDecomposition({ ...input, y: input.y.filter((_, i) => drop(i)), unit: input.unit.filter((_, i) => drop(i)), period: input.period.filter((_, i) => drop(i)) }),
      'invalid_input',
      /the two-way decomposition needs a balanced panel \(every unit in every period\): 40 units x 12 periods = 480 cells, but 479 rows/,
    )
    const y = input.y.slice()
    y[5] = NaN
    fails(() => baconDecomposition({ ...input, y }), 'invalid_input', /missing or non-finite outcome; the decomposition needs a balanced panel/)
    const period = input.period.slice()
    period[1] = 0
    fails(() => baconDecomposition({ ...input, period }), 'invalid_input', /needs a balanced panel: unit \d+ appears twice in period 0/)
  })

  it('a treatment with no variation is refused', () => {
    const input = c6Input()
    fails(() => baconDecomposition({ ...input, start: new Float64Array(input.nUnits).fill(4) }), 'singular_design', /does not vary once unit and period effects are removed/)
    fails(() => baconDecomposition({ ...input, start: new Float64Array(input.nUnits).fill(NaN) }), 'singular_design', /nothing to decompose/)
  })
})

describe('timing', () => {
  it('decomposition on 3,000 units x 240 periods with 20 timing groups', () => {
    const N = 3000
    const T = 240
    let a = 1
    const rnd = () => (a = (a * 16807) % 2147483647) / 2147483647
    const input: BaconInput = { y: new Float64Array(N * T), unit: new Int32Array(N * T), nUnits: N, period: new Int32Array(N * T), nPeriods: T, start: new Float64Array(N) }
    for (let u = 0; u < N; u++) {
      input.start[u] = u < 2000 ? 99 + 5 * (u % 20) : NaN
      const level = 50 + 10 * rnd()
      for (let t = 0; t < T; t++) {
        const i = u * T + t
        input.unit[i] = u
        input.period[i] = t
        input.y[i] = level + Math.sin(t / 5) + (t >= input.start[u] ? 2 : 0) + rnd() - 0.5
      }
    }
    baconDecomposition(input)
    const t0 = performance.now()
    const r = baconDecomposition(input)
    const ms = performance.now() - t0
    console.log(`decomposition, 3,000 units x 240 periods, 20 timing groups: ${ms.toFixed(0)} ms`)
    expect(r.rows).toHaveLength(20 + 20 * 19)
    expect(Math.abs(sum(r.rows, (q) => q.weight) - 1)).toBeLessThan(1e-10)
    expect(Math.abs(sum(r.rows, (q) => q.weight * q.estimate) - r.twfe)).toBeLessThan(1e-10)
    expect(ms).toBeLessThan(2000)
  })
})
