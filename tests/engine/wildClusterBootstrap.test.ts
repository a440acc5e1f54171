// The restricted wild cluster bootstrap-t (server/engine/inference/wildClusterBootstrap.ts).
// Reference values: case c2_produc_wild_cluster_bootstrap (tests/fixtures/reference; its
// README: "plm 2.6.2 dataset Produc (Munnell 1990: 48 US states x 1970-1986, balanced,
// N=816) ... R 4.2.2 lm(outcome ~ d + factor(unit) + factor(period)); t = b /
// sqrt(sandwich vcovCL(fit, cluster=~region, type='HC1')); restricted wild cluster bootstrap
// ..., full enumeration of 2^9 Rademacher and 6^9 Webb weight vectors"). Elsewhere the fast
// algorithm is checked against brute force: the restricted residuals from a dense dummy
// regression (ml-matrix QR) and a full refit with fitLinearModel for every draw.
import fc from 'fast-check'
import { Matrix, QrDecomposition } from 'ml-matrix'
import { describe, expect, it } from 'vitest'
import {
  type WildBootstrapModel,
  type WildBootstrapOptions,
  prepareWildBootstrap,
  runWildBootstrap,
  wildClusterBootstrap,
} from '../../server/engine/inference/wildClusterBootstrap'
import type { CsvRecord } from '../../server/engine/panel'
import { seededRandom } from '../../server/engine/random'
import { fitLinearModel } from '../../server/engine/regression'
import { loadCase, near } from './helpers'

/** Dense indices of values sorted as strings. */
function dense(values: string[]): { index: Int32Array; n: number } {
  const levels = [...new Set(values)].sort()
  const at = new Map(levels.map((v, i) => [v, i]))
  return { index: Int32Array.from(values.map((v) => at.get(v)!)), n: levels.length }
}

/** Relative agreement: |got - exp| <= rel |exp| + 1e-12. */
function nearRel(got: number, exp: number, rel: number, label: string): void {
  expect(Math.abs(got - exp), `${label}: got ${got}, expected ${exp}`).toBeLessThanOrEqual(rel * Math.abs(exp) + 1e-12)
}

describe('c2_produc_wild_cluster_bootstrap', () => {
  const { panel, expected: e, source } = loadCase('c2_produc_wild_cluster_bootstrap')
  const records = (panel as { records: CsvRecord[] }).records
  const col = (name: string) => records.map((r) => String(r[name]))
  const unit = dense(col('unit'))
  const period = dense(col('period'))
  const region = dense(col(e.spec.cluster))
  const model: WildBootstrapModel = {
    y: Float64Array.from(col('outcome'), Number),
    terms: [{ name: 'd', values: Float64Array.from(col('d'), Number) }],
    test: 'd',
    intercept: true,
    absorb: { unit: unit.index, nUnits: unit.n, period: period.index, nPeriods: period.n },
    cluster: region.index,
    nClusters: region.n,
    smallSample: 'full', // K_full, as the case's definitions state
  }
  const prep = prepareWildBootstrap(model)

  it(`fit: estimate, CR1 SE (K_full) and t (${source.slice(0, 60)}...)`, () => {
    expect(source).toMatch(/R 4\.2\.2/)
    expect(model.y.length).toBe(e.n_obs)
    expect(region.n).toBe(e.n_clusters)
    nearRel(prep.estimate, e.estimate, 1e-8, 'estimate')
    nearRel(prep.se, e.se_cr1, 1e-8, 'se_cr1')
    nearRel(prep.factor, e.fit.cr1_factor, 1e-12, 'cr1_factor')
    expect(prep.path).toBe('two_way_balanced')
  })

  it('Rademacher: full enumeration of 2^9 draws, counts, p and the first draws', () => {
    const r = runWildBootstrap(prep, { draws: 9999, weights: 'rademacher', seed: 1, level: 0.95, nullValue: e.spec.null })
    const x = e.rademacher
    nearRel(r.t, e.t_cr1, 1e-8, 't')
    expect(r.enumerated).toBe(true)
    expect(r.draws).toBe(x.n_draws)
    expect(r.counts).toEqual({ absGe: x.n_abs_ge, ge: x.n_ge, le: x.n_le, ties: x.n_ties_abs })
    expect(Math.abs(r.p - x.p_symmetric)).toBeLessThanOrEqual(1e-15)
    expect(Math.abs(r.pEqualTailed - x.p_equal_tailed)).toBeLessThanOrEqual(1e-15)
    expect(r.p).toBe(440 / 512)
    nearRel(r.minRelGap!, x.min_rel_gap, 1e-6, 'min_rel_gap')
    expect(r.firstDraws).toHaveLength(8)
    r.firstDraws.forEach((v, i) => nearRel(v, x.first_draws[i], 1e-8, `first_draws[${i}]`))
    // the all-ones draw (b = 0) reproduces t
    nearRel(r.firstDraws[0], r.t, 1e-12, 'identity draw')
  })

  it('Webb six-point: full enumeration of 6^9 = 10,077,696 draws, counts, p and the first draws', () => {
    const x = e.webb6
    expect(e.spec.webb_values).toHaveLength(6)
    const r = runWildBootstrap(prep, { draws: x.n_draws, weights: 'webb', seed: 1, level: 0.95 })
    expect(r.enumerated).toBe(true)
    expect(r.draws).toBe(x.n_draws)
    expect(r.counts).toEqual({ absGe: x.n_abs_ge, ge: x.n_ge, le: x.n_le, ties: x.n_ties_abs })
    expect(Math.abs(r.p - x.p_symmetric)).toBeLessThanOrEqual(1e-15)
    expect(Math.abs(r.pEqualTailed - x.p_equal_tailed)).toBeLessThanOrEqual(1e-15)
    expect(r.p).toBe(8587108 / 10077696)
    nearRel(r.minRelGap!, x.min_rel_gap, 1e-6, 'min_rel_gap')
    r.firstDraws.forEach((v, i) => nearRel(v, x.first_draws[i], 1e-8, `first_draws[${i}]`))
    // an interval over ten million draws would keep 400 MB of per-draw parts: refused with a reason
    expect(r.ciLow).toBeNull()
    expect(r.ciHigh).toBeNull()
    expect(r.ciReason).toMatch(/limited to 1,000,000 draws/)
  }, 30_000)

  it('interval by test inversion: p at each bound is at 1 - level (enumerated and drawn weights)', () => {
    for (const opts of [
      { draws: 9999, weights: 'rademacher', seed: 1, level: 0.95 },
      { draws: 999, weights: 'webb', seed: 7, level: 0.9 },
    ] as WildBootstrapOptions[]) {
      const r = runWildBootstrap(prep, opts)
      expect(r.ciLow, JSON.stringify(opts)).not.toBeNull()
      expect(r.ciHigh).not.toBeNull()
      expect(r.ciReason).toBeNull()
      expect(r.ciLow!).toBeLessThan(r.estimate)
      expect(r.ciHigh!).toBeGreaterThan(r.estimate)
      const alpha = 1 - opts.level
      const tol = 1e-6 * r.se
      const pAt = (b: number) => runWildBootstrap(prep, { ...opts, nullValue: b, interval: false }).p
      expect(pAt(r.ciLow! + tol)).toBeGreaterThan(alpha)
      expect(pAt(r.ciLow! - tol)).toBeLessThanOrEqual(alpha)
      expect(pAt(r.ciHigh! - tol)).toBeGreaterThan(alpha)
      expect(pAt(r.ciHigh! + tol)).toBeLessThanOrEqual(alpha)
      // zero is inside (p = 0.86 at the null)
      expect(r.ciLow! < 0 && r.ciHigh! > 0).toBe(true)
    }
  })
})

// ---------------------------------------------------------------------------------------
// Brute force on small synthetic panels

interface PanelShape {
  units: number
  periods: number
  /** Cluster of row (unit u, period t). */
  cluster: (u: number, t: number) => number
  nClusters: number
  effects: 'none' | 'unit' | 'two-way'
  /** Rows left out (unbalanced panels). */
  drop?: (u: number, t: number) => boolean
  seed: number
}

/** y = unit + period effects + 0.5 d + 0.3 x + a cluster shock per period + noise; d = unit % 3 == 0 from mid-panel. */
function smallModel(shape: PanelShape): WildBootstrapModel {
  const r = seededRandom(shape.seed)
  const unitFx = Array.from({ length: shape.units }, () => 3 * r.uniform())
  const periodFx = Array.from({ length: shape.periods }, () => r.uniform())
  const shock = Array.from({ length: shape.nClusters * shape.periods }, () => r.uniform() - 0.5)
  const y: number[] = []
  const d: number[] = []
  const x: number[] = []
  const unit: number[] = []
  const period: number[] = []
  const cluster: number[] = []
  for (let u = 0; u < shape.units; u++) {
    for (let t = 0; t < shape.periods; t++) {
      if (shape.drop?.(u, t)) continue
      const g = shape.cluster(u, t)
      const dv = u % 3 === 0 && t >= shape.periods / 2 ? 1 : 0
      const xv = r.uniform() + 0.1 * t
      y.push(unitFx[u] + periodFx[t] + 0.5 * dv + 0.3 * xv + shock[g * shape.periods + t] + 0.5 * (r.uniform() - 0.5))
      d.push(dv)
      x.push(xv)
      unit.push(u)
      period.push(t)
      cluster.push(g)
    }
  }
  const absorb =
    shape.effects === 'none'
      ? undefined
      : { unit: Int32Array.from(unit), nUnits: shape.units, ...(shape.effects === 'two-way' ? { period: Int32Array.from(period), nPeriods: shape.periods } : {}) }
  const terms = [
    { name: 'd', values: Float64Array.from(d) },
    { name: 'x', values: Float64Array.from(x) },
  ]
  if (shape.effects === 'none') terms.push({ name: 'late', values: Float64Array.from(period, (t) => (t >= shape.periods / 2 ? 1 : 0)) })
  return { y: Float64Array.from(y), terms, test: 'd', intercept: true, absorb, cluster: Int32Array.from(cluster), nClusters: shape.nClusters, smallSample: 'nested' }
}

/** Restricted residuals from the dense dummy-variable regression of y - beta0 d (QR). */
function restrictedResiduals(model: WildBootstrapModel, beta0: number): Float64Array {
  const n = model.y.length
  const tested = model.terms.find((t) => t.name === model.test)!.values
  const cols = model.terms.filter((t) => t.name !== model.test).map((t) => t.values)
  const a = model.absorb
  if (a) {
    for (let u = 0; u < a.nUnits; u++) cols.push(Float64Array.from(a.unit, (v) => (v === u ? 1 : 0)))
    if (a.period) for (let t = 1; t < a.nPeriods!; t++) cols.push(Float64Array.from(a.period, (v) => (v === t ? 1 : 0)))
  } else if (model.intercept) cols.push(new Float64Array(n).fill(1))
  const X = new Matrix(n, cols.length)
  cols.forEach((c, j) => c.forEach((v, i) => X.set(i, j, v)))
  const target = Float64Array.from(model.y, (v, i) => v - beta0 * tested[i])
  const b = new QrDecomposition(X).solve(Matrix.columnVector(Array.from(target)))
  const fitted = X.mmul(b)
  return Float64Array.from(target, (v, i) => v - fitted.get(i, 0))
}

/** t* for each weight vector by refitting the full model on y* = yr + w o ur with fitLinearModel. */
function bruteForce(model: WildBootstrapModel, beta0: number, weights: number[][]): number[] {
  const ur = restrictedResiduals(model, beta0)
  return weights.map((w) => {
    const y = Float64Array.from(model.y, (v, i) => v - ur[i] + w[model.cluster[i]] * ur[i])
    const fit = fitLinearModel({
      y,
      terms: model.terms,
      intercept: model.intercept,
      absorb: model.absorb,
      covariance: { kind: 'cluster', cluster: model.cluster, nClusters: model.nClusters, smallSample: model.smallSample },
    })
    const j = fit.names.indexOf(model.test)
    return (fit.beta[j] - beta0) / Math.sqrt(fit.vcov.get(j, j))
  })
}

/** Rademacher vector of enumerated draw b: w_g = +1 if bit g of b is 0, else -1. */
const rademacherDraw = (b: number, G: number) => Array.from({ length: G }, (_, g) => ((b >> g) & 1 ? -1 : 1))

const shapes: [string, PanelShape, string][] = [
  ['(a) unit effects, clusters = units', { units: 6, periods: 10, cluster: (u) => u, nClusters: 6, effects: 'unit', seed: 11 }, 'diagonal'],
  ['(b) balanced two-way, clusters = units', { units: 6, periods: 10, cluster: (u) => u, nClusters: 6, effects: 'two-way', seed: 12 }, 'two_way_balanced'],
  [
    '(c) unbalanced two-way, clusters = units',
    { units: 6, periods: 10, cluster: (u) => u, nClusters: 6, effects: 'two-way', drop: (u, t) => (u * 7 + t * 3) % 11 === 0, seed: 13 },
    'general',
  ],
  ['(d) balanced two-way, clusters = groups of 3 units', { units: 18, periods: 8, cluster: (u) => Math.floor(u / 3), nClusters: 6, effects: 'two-way', seed: 14 }, 'two_way_balanced'],
  [
    '(d2) unbalanced two-way, clusters = groups of units',
    { units: 18, periods: 8, cluster: (u) => u % 6, nClusters: 6, effects: 'two-way', drop: (u, t) => (u + 2 * t) % 9 === 4, seed: 15 },
    'general',
  ],
  ['(e) balanced two-way, clusters cutting across units', { units: 6, periods: 12, cluster: (u, t) => (u + Math.floor(t / 4)) % 6, nClusters: 6, effects: 'two-way', seed: 16 }, 'general'],
  ['(e2) unit effects, clusters cutting across units', { units: 6, periods: 12, cluster: (u, t) => (u + t) % 6, nClusters: 6, effects: 'unit', seed: 17 }, 'general'],
  ['(f) no fixed effects: intercept and slopes, clusters = groups of units', { units: 12, periods: 6, cluster: (u) => u % 6, nClusters: 6, effects: 'none', seed: 18 }, 'diagonal'],
]

describe('fast algorithm = brute-force refits (64 enumerated Rademacher draws on 6 clusters)', () => {
  for (const [label, shape, path] of shapes) {
    it(label, () => {
      const model = smallModel(shape)
      const prep = prepareWildBootstrap(model)
      expect(prep.path).toBe(path)
      for (const beta0 of [0, 0.3]) {
        const r = runWildBootstrap(prep, { draws: 64, weights: 'rademacher', seed: 1, level: 0.95, nullValue: beta0, keep: 64, interval: false })
        expect(r.enumerated).toBe(true)
        expect(r.firstDraws).toHaveLength(64)
        const brute = bruteForce(model, beta0, Array.from({ length: 64 }, (_, b) => rademacherDraw(b, 6)))
        r.firstDraws.forEach((v, b) => nearRel(v, brute[b], 1e-8, `${label} beta0=${beta0} draw ${b}`))
        nearRel(r.firstDraws[0], r.t, 1e-10, 'identity draw = t')
        // p from the brute-force t*
        const absT = Math.abs(r.t) * (1 - 1e-9)
        expect(r.p).toBe(brute.filter((v) => Math.abs(v) >= absT).length / 64)
      }
    })
  }

  it('drawn weights (fewer draws than 2^G): the all-ones draw first, then seededRandom(seed) one cluster at a time', () => {
    const seven: PanelShape = { units: 14, periods: 8, cluster: (u) => u % 7, nClusters: 7, effects: 'two-way', seed: 19 }
    for (const [model, G] of [
      [smallModel(shapes[3][1]), 6],
      [smallModel(seven), 7],
    ] as const) {
      const seed = 42
      const rng = seededRandom(seed)
      const webb = [-Math.sqrt(1.5), -1, -Math.sqrt(0.5), Math.sqrt(0.5), 1, Math.sqrt(1.5)]
      const draws = Array.from({ length: 40 }, (_, b) => (b === 0 ? Array(G).fill(1) : Array.from({ length: G }, () => webb[rng.int(6)])))
      const brute = bruteForce(model, 0.2, draws)
      // with and without the interval (the per-draw parts are summed in a different loop)
      for (const interval of [false, true]) {
        const r = wildClusterBootstrap(model, { draws: 40, weights: 'webb', seed, level: 0.95, keep: 40, interval, nullValue: 0.2 })
        expect(r.enumerated).toBe(false)
        r.firstDraws.forEach((v, b) => nearRel(v, brute[b], 1e-8, `G=${G} drawn ${b}`))
      }
    }
  })

  it('interval on drawn weights: p at the bounds is at 1 - level; the analytic interval is a fair bracket', () => {
    const model = smallModel({ ...shapes[3][1], units: 36, cluster: (u) => Math.floor(u / 3), nClusters: 12 })
    const prep = prepareWildBootstrap(model)
    const opts: WildBootstrapOptions = { draws: 999, weights: 'rademacher', seed: 3, level: 0.95 }
    const r = runWildBootstrap(prep, opts)
    expect(r.enumerated).toBe(false)
    const tol = 1e-6 * r.se
    const pAt = (b: number) => runWildBootstrap(prep, { ...opts, nullValue: b, interval: false }).p
    expect(pAt(r.ciLow! + tol)).toBeGreaterThan(0.05)
    expect(pAt(r.ciLow! - tol)).toBeLessThanOrEqual(0.05)
    expect(pAt(r.ciHigh! - tol)).toBeGreaterThan(0.05)
    expect(pAt(r.ciHigh! + tol)).toBeLessThanOrEqual(0.05)
  })

  it('no bound when too few draws can reject (G = 3: 8 draws, p >= 2/8): null bounds with the reason', () => {
    const model = smallModel({ units: 6, periods: 8, cluster: (u) => u % 3, nClusters: 3, effects: 'two-way', seed: 5 })
    const r = wildClusterBootstrap(model, { draws: 999, weights: 'rademacher', seed: 1, level: 0.95 })
    expect(r.draws).toBe(8)
    expect(r.p).toBeGreaterThanOrEqual(0.25)
    expect(r.ciLow).toBeNull()
    expect(r.ciHigh).toBeNull()
    expect(r.ciReason).toMatch(/no bound on either side/)
  })
})

describe('refusals', () => {
  const model = smallModel(shapes[1][1])
  const opts: WildBootstrapOptions = { draws: 99, weights: 'rademacher', seed: 1, level: 0.95 }
  const code = (f: () => unknown) => {
    try {
      f()
    } catch (err) {
      return (err as { code?: string }).code
    }
    return 'no error'
  }
  it('single cluster, bad options, unknown term', () => {
    expect(code(() => wildClusterBootstrap({ ...model, cluster: new Int32Array(model.y.length), nClusters: 1 }, opts))).toBe('single_cluster')
    expect(code(() => wildClusterBootstrap(model, { ...opts, draws: 0 }))).toBe('invalid_spec')
    expect(code(() => wildClusterBootstrap(model, { ...opts, draws: 9.5 }))).toBe('invalid_spec')
    expect(code(() => wildClusterBootstrap(model, { ...opts, level: 1.2 }))).toBe('invalid_spec')
    expect(code(() => wildClusterBootstrap(model, { ...opts, seed: -1 }))).toBe('invalid_spec')
    expect(code(() => wildClusterBootstrap(model, { ...opts, weights: 'mammen' as 'webb' }))).toBe('invalid_spec')
    expect(code(() => wildClusterBootstrap({ ...model, test: 'nope' }, opts))).toBe('invalid_input')
    expect(code(() => wildClusterBootstrap({ ...model, nClusters: 7 }, opts))).toBe('invalid_input')
  })
})

// ---------------------------------------------------------------------------------------
// Properties (fast-check, few runs)

describe('properties', () => {
  const shapeArb = fc.record({
    seed: fc.integer({ min: 1, max: 2 ** 31 }),
    // G >= 3: with two units and two-way effects the two cluster scores cancel exactly (SE 0)
    G: fc.integer({ min: 3, max: 8 }),
    perCluster: fc.integer({ min: 1, max: 3 }),
    effects: fc.constantFrom<'unit' | 'two-way'>('unit', 'two-way'),
    unbalanced: fc.boolean(),
  })
  const build = (s: { seed: number; G: number; perCluster: number; effects: 'unit' | 'two-way'; unbalanced: boolean }) =>
    smallModel({
      units: s.G * s.perCluster,
      periods: 8,
      cluster: (u) => u % s.G,
      nClusters: s.G,
      effects: s.effects,
      drop: s.unbalanced ? (u, t) => (u * 5 + t) % 7 === 3 : undefined,
      seed: s.seed,
    })
  const opts = (weights: 'rademacher' | 'webb'): WildBootstrapOptions => ({ draws: 99, weights, seed: 9, level: 0.95, interval: false })

  it('p lies in (0, 1] and is at least 1/draws', () => {
    fc.assert(
      fc.property(shapeArb, fc.constantFrom<'rademacher' | 'webb'>('rademacher', 'webb'), fc.double({ min: -2, max: 2, noNaN: true }), (s, weights, beta0) => {
        const r = wildClusterBootstrap(build(s), { ...opts(weights), nullValue: beta0 })
        expect(r.p).toBeGreaterThan(0)
        expect(r.p).toBeLessThanOrEqual(1)
        expect(r.p).toBeGreaterThanOrEqual(1 / r.draws)
      }),
      { numRuns: 15 },
    )
  })

  it('invariant to row order', () => {
    fc.assert(
      fc.property(shapeArb, fc.integer({ min: 1, max: 2 ** 31 }), (s, shuffleSeed) => {
        const m = build(s)
        const n = m.y.length
        const rng = seededRandom(shuffleSeed)
        const order = Array.from({ length: n }, (_, i) => i)
        for (let i = n - 1; i > 0; i--) {
          const j = rng.int(i + 1)
          ;[order[i], order[j]] = [order[j], order[i]]
        }
        const pick = <T extends Float64Array | Int32Array>(v: T): T => (v instanceof Int32Array ? Int32Array.from(order, (i) => v[i]) : Float64Array.from(order, (i) => v[i])) as T
        const shuffled: WildBootstrapModel = {
          ...m,
          y: pick(m.y),
          terms: m.terms.map((t) => ({ name: t.name, values: pick(t.values) })),
          cluster: pick(m.cluster),
          absorb: m.absorb && { ...m.absorb, unit: pick(m.absorb.unit), ...(m.absorb.period ? { period: pick(m.absorb.period) } : {}) },
        }
        const a = wildClusterBootstrap(m, opts('webb'))
        const b = wildClusterBootstrap(shuffled, opts('webb'))
        near(b.t, a.t, 'shuffled t')
        expect(b.p).toBe(a.p)
      }),
      { numRuns: 10 },
    )
  })

  it('invariant to adding a constant to one unit (absorbed by its fixed effect)', () => {
    fc.assert(
      fc.property(shapeArb, fc.double({ min: -100, max: 100, noNaN: true }), fc.nat(), (s, shift, which) => {
        const m = build(s)
        const u = which % m.absorb!.nUnits
        const moved = { ...m, y: Float64Array.from(m.y, (v, i) => v + (m.absorb!.unit[i] === u ? shift : 0)) }
        const a = wildClusterBootstrap(m, { ...opts('rademacher'), interval: true })
        const b = wildClusterBootstrap(moved, { ...opts('rademacher'), interval: true })
        near(b.estimate, a.estimate, 'estimate')
        near(b.t, a.t, 't')
        expect(b.p).toBe(a.p)
        if (a.ciLow !== null) near(b.ciLow, a.ciLow, 'ciLow')
        if (a.ciHigh !== null) near(b.ciHigh, a.ciHigh, 'ciHigh')
      }),
      { numRuns: 8 },
    )
  })

  it('the same seed gives the same p and draws; different seeds give different draws', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 32 - 1 }), fc.integer({ min: 1, max: 2 ** 32 - 1 }), (s1, s2) => {
        fc.pre(s1 !== s2)
        const m = build({ seed: 3, G: 8, perCluster: 2, effects: 'two-way', unbalanced: false })
        const o = { draws: 99, weights: 'rademacher' as const, seed: s1, level: 0.95, interval: false, keep: 20 }
        const a = wildClusterBootstrap(m, o)
        expect(a.enumerated).toBe(false)
        expect(wildClusterBootstrap(m, o)).toEqual(a)
        const b = wildClusterBootstrap(m, { ...o, seed: s2 })
        expect(b.firstDraws[0]).toBe(a.firstDraws[0]) // the all-ones draw leads both
        expect(b.firstDraws.slice(1)).not.toEqual(a.firstDraws.slice(1))
      }),
      { numRuns: 10 },
    )
  })
})
