// Weighted comparison (design "synthetic"): simplex weights, the synthetic series, placebo
// inference with re-fitted weights, and its test-inversion interval.
// Reference values: c4_gasoline_synth_sweden (its README: "plm 2.6.2 dataset Gasoline
// (Baltagi & Griffin 1983: 18 OECD countries x 1960-1978, balanced); outcome = lgaspcar (log
// motor gasoline consumption per car); made-up intervention in SWEDEN from 1973 (pre
// 1960-1972, post 1973-1978); donors = the other 17 countries. R 4.2.2 quadprog 1.5.8
// solve.QP on pre-period outcomes (simplex weights), polished on the support; placebo in
// space re-fits weights for each donor."), at the tolerance its expected.json states:
// weights 1e-6 absolute; series, gaps, RMSPEs, ratios relative 1e-6; rank exact; p_ratio
// 1e-15 absolute. The other panels are small ones built here with known structure (values
// derived by hand in the comments), and random problems for the properties.
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { EngineError, estimate } from '../../server/engine/index'
import { inversionInterval, ratioRankP, syntheticSeries } from '../../server/engine/designs/synthetic'
import type { CsvRecord, TypedRow } from '../../server/engine/panel'
import { fitSimplexWeights } from '../../server/engine/synthWeights'
import type { EstimateResult } from '../../shared/engine/result'
import { loadCase, near, fails } from './helpers'

const c4 = loadCase('c4_gasoline_synth_sweden')
const e = c4.expected
const records = (c4.panel as { records: CsvRecord[] }).records
const donors: string[] = e.spec.donors
const spec = { design: 'synthetic', treated: ['SWEDEN'], start: 1973 } as const

/** Outcome series of one unit from the c4 panel, in period order. */
function seriesOf(unit: string, rows: CsvRecord[] = records): Float64Array {
  return Float64Array.from(
    rows.filter((r) => r.unit === unit).sort((a, b) => Number(a.period) - Number(b.period)),
    (r) => Number(r.outcome),
  )
}
const nPre: number = e.n_pre
const pre = (unit: string) => seriesOf(unit).subarray(0, nPre)


/** c4's tolerance for weights: 1e-6 absolute. */
function nearWeight(got: number | undefined, exp: number, label: string): void {
  expect(got, label).toBeTypeOf('number')
  expect(Math.abs((got as number) - exp), `${label}: got ${got}, expected ${exp}`).toBeLessThanOrEqual(1e-6)
}

/** Root mean square of a slice of a gap path. */
function rms(gap: (number | null)[], from: number, to: number): number {
  let s = 0
  for (let t = from; t < to; t++) s += (gap[t] as number) ** 2
  return Math.sqrt(s / (to - from))
}

describe(`c4 weighted comparison (${c4.source.slice(0, 60)}...)`, () => {
  const r = estimate(c4.panel, spec)
  const syn = r.synthetic!

  it('weights: every donor listed, 1e-6 absolute, on the simplex', () => {
    expect(Object.keys(syn.weights).sort()).toEqual([...donors].sort())
    for (const d of donors) nearWeight(syn.weights[d], e.weights[d], `weight ${d}`)
    const w = Object.values(syn.weights)
    expect(Math.abs(w.reduce((a, b) => a + b, 0) - 1)).toBeLessThan(1e-12)
    expect(w.every((v) => v >= 0)).toBe(true)
    expect(donors.filter((d) => syn.weights[d] > 0)).toEqual(e.support)
    expect(r.fit.kFull).toBe(e.support.length)
  })

  it('series, gaps, RMSPEs, ratio and mean post gap: relative 1e-6', () => {
    expect(syn.series.map((s) => s.period)).toEqual(e.series.period.map(String))
    syn.series.forEach((s, t) => {
      near(s.treated, e.series.treated[t], `treated ${s.period}`)
      near(s.synthetic, e.series.synthetic[t], `synthetic ${s.period}`)
      near(s.gap, e.series.gap[t], `gap ${s.period}`)
    })
    near(syn.rmspePre, e.rmspe_pre, 'rmspe_pre')
    near(syn.rmspePost, e.rmspe_post, 'rmspe_post')
    near(syn.ratio, e.ratio, 'ratio')
    near(r.effect.estimate, e.mean_post_gap, 'mean_post_gap')
    expect(r.effect.term).toBe('gap_mean_post')
    expect(r.effect.se).toBeNull()
    expect(r.effect.t).toBeNull()
    expect(r.effect.df).toBeNull()
    near(r.fit.ssr, e.rmspe_pre ** 2 * nPre, 'ssr = n_pre rmspe_pre^2')
    near(r.fit.sigma, e.rmspe_pre, 'sigma = rmspe_pre')
    expect([r.nObs, r.nUnits, r.nPeriods]).toEqual([e.n_obs, e.n_units, e.n_periods])
    expect(r.coefficients).toEqual({})
    expect(r.nClusters).toBeNull()
    expect(r.vcov).toBe('iid')
    expect(syn.covariateBalance).toBeNull()
  })

  it('uniqueness certificate: unique, KKT minimum off the support (relative 1e-6)', () => {
    const fit = fitSimplexWeights(pre('SWEDEN'), donors.map(pre))
    expect(fit.unique).toBe(e.uniqueness.unique)
    expect(fit.support.map((j) => donors[j])).toEqual(e.support)
    near(fit.kktMinOffSupport, e.uniqueness.kkt_min_offsupport, 'kkt_min_offsupport')
    near(fit.rmspe, e.rmspe_pre, 'rmspe of the fit')
  })

  it('placebo in space: every ratio and RMSPE, rank and p exact', () => {
    const inf = r.inference!
    expect(inf.method).toBe('permutation')
    expect(inf.draws).toBe(donors.length)
    expect(inf.enumerated).toBe(true)
    expect(inf.pMin).toBe(1 / (donors.length + 1))
    expect(inf.placebos!.map((p) => p.unit)).toEqual(donors)
    near(inf.ratio, e.ratio, 'treated ratio in inference')
    const gaps = inf.gaps!
    expect(gaps.periods).toEqual(e.series.period.map(String))
    gaps.treated.forEach((g, t) => near(g as number, e.series.gap[t], `treated gap ${t}`))
    const all: { unit: string; ratio: number }[] = [{ unit: 'SWEDEN', ratio: syn.ratio }]
    for (const ref of e.placebo.units.filter((u: { is_treated: boolean }) => !u.is_treated)) {
      const p = inf.placebos!.find((q) => q.unit === ref.unit)!
      near(p.ratio, ref.ratio, `placebo ratio ${ref.unit}`)
      const path = gaps.placebos.find((q) => q.unit === ref.unit)!.gap
      near(rms(path, 0, nPre), ref.rmspe_pre, `placebo rmspe_pre ${ref.unit}`)
      near(rms(path, nPre, path.length), ref.rmspe_post, `placebo rmspe_post ${ref.unit}`)
      all.push({ unit: ref.unit, ratio: p.ratio as number })
    }
    // rank in decreasing order, ties 'min'
    const rank = (u: string) => 1 + all.filter((x) => x.ratio > all.find((y) => y.unit === u)!.ratio).length
    for (const ref of e.placebo.units) expect(rank(ref.unit), `rank ${ref.unit}`).toBe(ref.rank_ratio)
    expect(Math.abs(inf.p - e.placebo.p_ratio)).toBeLessThanOrEqual(1e-15)
    expect(inf.pRatio).toBe(inf.p)
    expect(r.effect.p).toBe(inf.p)
  })

  it('placebo weights: the reference support and unique for every donor', () => {
    for (const ref of e.placebo.units.filter((u: { is_treated: boolean }) => !u.is_treated)) {
      const pool = donors.filter((d) => d !== ref.unit)
      const fit = fitSimplexWeights(pre(ref.unit), pool.map(pre))
      expect(fit.support.map((j) => pool[j]), `support ${ref.unit}`).toEqual(ref.support)
      expect(fit.unique, `unique ${ref.unit}`).toBe(ref.weights_unique)
      near(fit.rmspe, ref.rmspe_pre, `rmspe_pre ${ref.unit}`)
    }
  })

  it('17 donors: no 95% interval and a warning that no p below 0.05 is possible', () => {
    expect(r.effect.ciLow).toBeNull()
    expect(r.effect.ciHigh).toBeNull()
    expect(r.warnings.join('\n')).toMatch(/with 17 donors no p below 1\/18 = 0\.056 is possible \(none below 0\.05: that needs 19 donors\), so no 95% interval can be bounded/)
    expect(r.warnings.join('\n')).not.toMatch(/not unique|poor pre-period fit|above every donor/)
  })

  it('syntheticSeries gives the same weights and the synthetic series over every period', () => {
    const preRows = [...Array(nPre).keys()]
    const out = syntheticSeries(seriesOf('SWEDEN'), donors.map((d) => seriesOf(d)), preRows)
    donors.forEach((d, j) => nearWeight(out.weights[j], e.weights[d], `weight ${d}`))
    out.series.forEach((v, t) => near(v, e.series.synthetic[t], `synthetic ${t}`))
    expect(out.unique).toBe(true)
    fails(() => syntheticSeries(seriesOf('SWEDEN'), donors.map((d) => seriesOf(d)), []), 'invalid_input', /no pre-period rows/)
  })
})

describe('weighted comparison: spec variants on c4', () => {
  const base = estimate(c4.panel, spec)
  it('window {pre, post} instead of start gives the same result; a shorter pre window fits on fewer rows', () => {
    const w = estimate(c4.panel, { design: 'synthetic', treated: ['SWEDEN'], window: { pre: [1960, 1972], post: [1973, 1978] } })
    expect(w.synthetic!.weights).toEqual(base.synthetic!.weights)
    expect(w.effect.estimate).toBe(base.effect.estimate)
    const short = estimate(c4.panel, { ...spec, window: { pre: [1965, 1972], post: [1973, 1978] } })
    expect(short.nPeriods).toBe(14)
    expect(short.synthetic!.series[0].period).toBe('1965')
  })

  it('transform "log" of exp(outcome) reproduces the reference weights', () => {
    const expRecords = records.map((rec) => ({ ...rec, outcome: String(Math.exp(Number(rec.outcome))) }))
    const r = estimate({ records: expRecords }, { ...spec, transform: 'log' })
    for (const d of donors) nearWeight(r.synthetic!.weights[d], e.weights[d], `log weight ${d}`)
    near(r.synthetic!.ratio, e.ratio, 'log ratio')
  })

  it('outcomes in the thousands: the same weights (scaling and shifting leave the problem unchanged)', () => {
    const big = records.map((rec) => ({ ...rec, outcome: String(1000 * Number(rec.outcome) + 5000) }))
    const r = estimate({ records: big }, spec)
    for (const d of donors) nearWeight(r.synthetic!.weights[d], e.weights[d], `scaled weight ${d}`)
    near(r.synthetic!.ratio, e.ratio, 'scaled ratio')
    near(r.effect.estimate, 1000 * e.mean_post_gap, 'scaled mean post gap')
  })

  it('a donor missing an outcome is left out, named in a warning', () => {
    const holed = records.map((rec) => (rec.unit === 'JAPAN' && rec.period === '1975' ? { ...rec, outcome: 'NA' } : rec))
    const r = estimate({ records: holed }, spec)
    expect(Object.keys(r.synthetic!.weights)).not.toContain('JAPAN')
    expect(r.inference!.draws).toBe(16)
    expect(r.warnings.join('\n')).toMatch(/left out 1 donor missing an outcome in a period used: "JAPAN"/)
  })

  it('a period where the treated unit has no outcome is left out, with a warning', () => {
    const holed = records.map((rec) => (rec.unit === 'SWEDEN' && rec.period === '1961' ? { ...rec, outcome: '' } : rec))
    const r = estimate({ records: holed }, spec)
    expect(r.nPeriods).toBe(18)
    expect(r.synthetic!.series.map((s) => s.period)).not.toContain('1961')
    expect(r.warnings.join('\n')).toMatch(/the treated unit "SWEDEN" has no outcome in 1 period \("1961"\): that period is left out/)
  })

  it('inference "permutation" as asked says so', () => {
    const r = estimate(c4.panel, { ...spec, inference: { method: 'permutation' } })
    expect(r.inference!.reason).toMatch(/as the spec asks/)
    expect(r.inference!.p).toBe(base.inference!.p)
  })
})

describe('weighted comparison: refusals', () => {
  it('one donor', () => {
    fails(() => estimate(c4.panel, { ...spec, comparison: ['GERMANY'] }), 'invalid_spec', /needs at least two donors with complete outcomes \(1 usable of 1\)/)
  })
  it('two treated units', () => {
    fails(() => estimate(c4.panel, { ...spec, treated: ['SWEDEN', 'NORWAY'] }), 'invalid_spec', /exactly one treated unit .*\(got 2\)/)
  })
  it('no pre-period', () => {
    fails(() => estimate(c4.panel, { ...spec, start: 1960 }), 'no_pre_periods', /no pre-periods: the treated unit "SWEDEN" has no outcome before the start 1960/)
  })
  it('no post-period', () => {
    fails(() => estimate(c4.panel, { ...spec, start: 1990 }), 'no_post_periods', /no post-periods/)
  })
  it('inference wild_bootstrap or analytic', () => {
    fails(() => estimate(c4.panel, { ...spec, inference: { method: 'wild_bootstrap' } }), 'invalid_spec', /the weighted comparison supports placebo \(permutation\) inference only/)
    fails(() => estimate(c4.panel, { ...spec, inference: { method: 'analytic' } }), 'invalid_spec', /supports placebo \(permutation\) inference only/)
  })
  it('a treatment column', () => {
    const withX = records.map((rec) => ({ ...rec, x: '0' }))
    fails(() => estimate({ records: withX }, { ...spec, treatmentColumn: 'x' }), 'invalid_spec', /does not take a treatmentColumn/)
  })
})

describe('weighted comparison: interval by test inversion (c4 at level 0.8)', () => {
  const level = 0.8
  const r = estimate(c4.panel, { ...spec, inference: { level } })
  const J = donors.length
  // k = smallest count with (1 + k)/(J + 1) > 1 - level: (1 + k)/18 > 0.2 gives k = 3
  const k = 3
  const shifted = (tau: number): EstimateResult =>
    estimate({ records: records.map((rec) => (rec.unit === 'SWEDEN' && Number(rec.period) >= 1973 ? { ...rec, outcome: String(Number(rec.outcome) - tau) } : rec)) }, { ...spec, inference: { level } })

  it('bounds around the mean post gap, as in the closed form', () => {
    const { ciLow, ciHigh } = r.effect
    expect(ciLow).toBeTypeOf('number')
    expect(ciHigh).toBeTypeOf('number')
    near(((ciLow as number) + (ciHigh as number)) / 2, e.mean_post_gap, 'interval centre = mean post gap')
    const R = e.placebo.units.filter((u: { is_treated: boolean }) => !u.is_treated).map((u: { ratio: number }) => u.ratio).sort((a: number, b: number) => b - a)
    const c = R[k - 1] * e.rmspe_pre
    const varPost = e.post_gaps.reduce((s: number, g: number) => s + (g - e.mean_post_gap) ** 2, 0) / e.post_gaps.length
    near(((ciHigh as number) - (ciLow as number)) / 2, Math.sqrt(c * c - varPost), 'half-width sqrt(c^2 - var_post)')
    expect(r.inference!.ciLow).toBe(ciLow)
    expect(r.inference!.ciHigh).toBe(ciHigh)
  })

  it('p at each bound equals the threshold (1 + k)/(J + 1); just outside it falls to k/(J + 1) <= 1 - level', () => {
    const { ciLow, ciHigh } = r.effect as { ciLow: number; ciHigh: number }
    for (const [tau, out] of [
      [ciLow, ciLow - 1e-6],
      [ciHigh, ciHigh + 1e-6],
    ]) {
      const at = shifted(tau)
      expect(at.inference!.p, `p at ${tau}`).toBeCloseTo((1 + k) / (J + 1), 14)
      expect(at.inference!.p).toBeGreaterThan(1 - level)
      // weights and placebo ratios do not move when the treated post outcomes shift
      expect(at.synthetic!.weights).toEqual(r.synthetic!.weights)
      expect(at.inference!.placebos).toEqual(r.inference!.placebos)
      expect(shifted(out).inference!.p, `p just outside ${tau}`).toBeCloseTo(k / (J + 1), 14)
      expect(shifted(out).inference!.p).toBeLessThanOrEqual(1 - level)
    }
  })

  it('ratio rank p and the inversion on made-up numbers (too few placebos, empty set)', () => {
    expect(ratioRankP(2, [1, 2, 3, 2 * (1 - 1e-12)])).toBe(4 / 5)
    expect(ratioRankP(5, [1, 2, 3])).toBe(1 / 4)
    // 9 placebos at level 0.95: 1/10 > 0.05, every tau is kept
    expect(inversionInterval(Float64Array.of(1, 2), 1, [1, 2, 3, 4, 5, 6, 7, 8, 9], 0.95)).toEqual({ ciLow: null, ciHigh: null, unbounded: 'too_few' })
    // post gaps 0 and 10 (population variance 25) against c = 1 (k = 2): nothing is kept
    expect(inversionInterval(Float64Array.of(0, 10), 1, Array(39).fill(1), 0.95)).toEqual({ ciLow: null, ciHigh: null, unbounded: 'empty' })
    // gaps 1 and 3 (mean 2, variance 1), rmspePre 1; 39 placebos at 0.95: (1 + k)/40 > 0.05
    // gives k = 2, the second largest ratio 3, so c = 3 and the bounds are 2 +- sqrt(9 - 1)
    const ok = inversionInterval(Float64Array.of(1, 3), 1, [4, 3, ...Array(37).fill(0.5)], 0.95)
    near(ok.ciLow, 2 - Math.sqrt(8), 'low')
    near(ok.ciHigh, 2 + Math.sqrt(8), 'high')
  })
})

describe('weighted comparison: covariates', () => {
  // Donors A and B repeat the treated unit's pre-period path exactly, C runs the other way:
  // the outcome alone cannot choose between A and B (any mix of them fits perfectly), but the
  // covariate x (treated 5, A 5, B 10, C 0) can: all weight goes to A.
  const path: Record<string, number[]> = { T: [1, 2, 3, 4, 9], A: [1, 2, 3, 4, 5], B: [1, 2, 3, 4, 6], C: [4, 3, 2, 1, 0] }
  const x: Record<string, number> = { T: 5, A: 5, B: 10, C: 0 }
  const rows: TypedRow[] = Object.entries(path).flatMap(([unit, ys]) => ys.map((y, t) => ({ unit, period: t + 1, values: { outcome: y, x: x[unit], flat: 1 } })))
  const covSpec = { design: 'synthetic', treated: ['T'], start: 5 } as const

  it('without covariates the weights are not unique, and the result says so', () => {
    const r = estimate({ rows }, covSpec)
    expect(r.warnings.join('\n')).toMatch(/the weights are not unique/)
    const w = r.synthetic!.weights
    expect(Math.abs(w.A + w.B + w.C - 1)).toBeLessThan(1e-12)
  })

  it('matching x picks A alone; the balance table shows the match', () => {
    const r = estimate({ rows }, { ...covSpec, synthetic: { covariates: ['x'] } })
    nearWeight(r.synthetic!.weights.A, 1, 'A')
    nearWeight(r.synthetic!.weights.B, 0, 'B')
    expect(r.synthetic!.covariateBalance).toHaveLength(1)
    near(r.synthetic!.covariateBalance![0].synthetic, 5, 'synthetic x')
    expect(r.synthetic!.covariateBalance![0].treated).toBe(5)
    near(r.effect.estimate, 4, 'gap 9 - 5')
    expect(r.warnings.join('\n')).not.toMatch(/not unique/)
  })

  it('a covariate equal in every unit is not used, with a warning', () => {
    const r = estimate({ rows }, { ...covSpec, synthetic: { covariates: ['flat'] } })
    expect(r.warnings.join('\n')).toMatch(/"flat" has the same pre-period mean in every unit/)
    expect(r.synthetic!.covariateBalance).toBeNull()
  })
})

describe('simplex weights: properties (fast-check)', () => {
  const problem = fc
    .record({ J: fc.integer({ min: 2, max: 7 }), T: fc.integer({ min: 1, max: 9 }), seed: fc.integer({ min: 1, max: 2 ** 31 - 1 }), level: fc.double({ min: -1000, max: 1000, noNaN: true }) })
    .map(({ J, T, seed, level }) => {
      let a = seed
      const u = () => ((a = (Math.imul(a, 48271) >>> 0) % 2147483647), a / 2147483647)
      const col = () => Float64Array.from({ length: T }, () => level + 10 * (u() - 0.5))
      return { target: col(), donors: Array.from({ length: J }, col) }
    })
  const loss = (y: Float64Array, Y: Float64Array[], w: ArrayLike<number>) => {
    let s = 0
    for (let t = 0; t < y.length; t++) {
      let fit = 0
      for (let j = 0; j < Y.length; j++) fit += w[j] * Y[j][t]
      s += (y[t] - fit) ** 2
    }
    return s
  }

  it('weights are >= 0, sum to 1, and no vertex or the centre of the simplex fits better', () => {
    fc.assert(
      fc.property(problem, ({ target, donors: Y }) => {
        const fit = fitSimplexWeights(target, Y)
        const w = Array.from(fit.weights)
        expect(w.every((v) => v >= 0)).toBe(true)
        expect(Math.abs(w.reduce((s, v) => s + v, 0) - 1)).toBeLessThan(1e-12)
        const best = loss(target, Y, w)
        const slack = 1e-9 * (1 + best)
        for (let j = 0; j < Y.length; j++) expect(best).toBeLessThanOrEqual(loss(target, Y, Y.map((_, k) => (k === j ? 1 : 0))) + slack)
        expect(best).toBeLessThanOrEqual(loss(target, Y, Y.map(() => 1 / Y.length)) + slack)
        expect(fit.rmspe).toBeCloseTo(Math.sqrt(best / target.length), 9)
      }),
      { numRuns: 60, seed: 7 },
    )
  })

  it('identical donors: weights on the simplex, reported as not unique; bad input refused', () => {
    const y = Float64Array.of(1, 2, 3)
    const d = Float64Array.of(0, 1, 1)
    const fit = fitSimplexWeights(y, [d, Float64Array.from(d), Float64Array.of(5, 5, 5)])
    expect(fit.unique).toBe(false)
    expect(Math.abs(fit.weights.reduce((s, v) => s + v, 0) - 1)).toBeLessThan(1e-12)
    expect(fitSimplexWeights(y, [d]).weights[0]).toBe(1)
    fails(() => fitSimplexWeights(y, []), 'invalid_input', /no donors/)
    fails(() => fitSimplexWeights(y, [Float64Array.of(1, 2)]), 'invalid_input', /donor 0 has 2 rows, the target 3/)
    fails(() => fitSimplexWeights(y, [Float64Array.of(1, NaN, 2)]), 'invalid_input', /donor 0 has a value that is not a finite number in row 1/)
  })
})

/** A smooth panel with noise: units u000.. with their own level and trend (mulberry32 draws). */
function bigPanel(nUnits: number, nPeriods: number, seed: number): TypedRow[] {
  let a = seed >>> 0
  const r = () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
  const rows: TypedRow[] = []
  for (let u = 0; u < nUnits; u++) {
    const level = 50 + 10 * r()
    const trend = 0.2 * (r() - 0.5)
    for (let t = 0; t < nPeriods; t++) rows.push({ unit: `u${String(u).padStart(3, '0')}`, period: t + 1, values: { outcome: level + trend * t + Math.sin(t / 5) + r() - 0.5 } })
  }
  return rows
}

describe('weighted comparison: timing', () => {
  it('100 donors x 120 pre-periods: weights under 200 ms (goal 50 ms)', () => {
    const rows = bigPanel(101, 120, 11)
    const by = (u: number) => Float64Array.from(rows.slice(u * 120, (u + 1) * 120), (row) => row.values.outcome as number)
    const target = by(0)
    const pool = Array.from({ length: 100 }, (_, j) => by(j + 1))
    fitSimplexWeights(target, pool)
    const times: number[] = []
    for (let i = 0; i < 5; i++) {
      const t0 = performance.now()
      const fit = fitSimplexWeights(target, pool)
      times.push(performance.now() - t0)
      expect(Math.abs(fit.weights.reduce((s, v) => s + v, 0) - 1)).toBeLessThan(1e-12)
    }
    const median = times.sort((x, y) => x - y)[2]
    console.log(`synthetic weights 100 donors x 120 pre: median ${median.toFixed(1)} ms`)
    expect(median).toBeLessThan(200)
  })

  it('placebo refits for every donor (100 donors, 120 pre + 10 post): under 6 s (goal 3 s)', () => {
    const rows = bigPanel(101, 130, 12)
    const t0 = performance.now()
    const r = estimate({ rows }, { design: 'synthetic', treated: ['u000'], start: 121 })
    const ms = performance.now() - t0
    console.log(`synthetic with placebo refits for every donor: ${ms.toFixed(0)} ms`)
    expect(r.inference!.placebos).toHaveLength(100)
    expect(r.inference!.pMin).toBe(1 / 101)
    expect(ms).toBeLessThan(6000)
  }, 30_000)
})
