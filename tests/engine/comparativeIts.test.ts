// Comparative and multiple interrupted time series (its.comparison "none" | "mean" |
// "synthetic") and phases in difference-in-differences (did.phases).
// Reference values: c1_synthetic_cits_two_breaks (its README: "synthetic monthly panel
// generated in R ...; R 4.2.2 lm(y ~ time + level_1 + slope_1 + level_2 + slope_2 +
// factor(month)) on (a) T1, (b) T1 - comparison mean, (c) stacked fully interacted with z;
// se_hac = sandwich NeweyWest(fit, lag=12, prewhite=FALSE, adjust=FALSE); stacked:
// vcovCL(cluster=~period, type='HC1')"), at the tolerance its expected.json states: relative
// 1e-8 on every estimate, SE and statistic; p-values 1e-6 relative or 1e-12 absolute.
// The other panels are small ones invented here with known structure.
import { describe, expect, it } from 'vitest'
import { EngineError, estimate } from '../../server/engine/index'
import type { CsvRecord, TypedRow } from '../../server/engine/panel'
import { fitLinearModel } from '../../server/engine/regression'
import type { EstimateResult } from '../../shared/engine/result'
import { type Expected, loadCase, fails } from './helpers'

const c1 = loadCase('c1_synthetic_cits_two_breaks')
const e = c1.expected
const records = (c1.panel as { records: CsvRecord[] }).records

/** c1's tolerance: relative 1e-8 on estimates, SEs and statistics. */
function close(got: number | null | undefined, exp: number, label: string): void {
  expect(got, label).toBeTypeOf('number')
  expect(Math.abs((got as number) - exp), `${label}: got ${got}, expected ${exp}`).toBeLessThanOrEqual(1e-8 * Math.abs(exp))
}

/** c1's tolerance for p-values: 1e-6 relative or 1e-12 absolute. */
function closeP(got: number | null | undefined, exp: number, label: string): void {
  expect(got, label).toBeTypeOf('number')
  const diff = Math.abs((got as number) - exp)
  expect(diff <= 1e-6 * Math.abs(exp) || diff <= 1e-12, `${label}: got ${got}, expected ${exp}`).toBe(true)
}


/** Reference coefficient name -> ours (month_k is our season_k). */
const ours = (ref: string) => ref.replace(/^month_/, 'season_')

const itsSpec = (its: Record<string, unknown>, extra: Record<string, unknown> = {}) => ({
  design: 'its',
  treated: [e.spec.treated_unit as string],
  ...extra,
  its: { breaks: e.spec.breaks, seasonality: 'month', seasonColumn: 'month', ...its },
})

/** Every coefficient of a block: estimate, se_iid, the Newey-West SE at `lag`; at lag 12 also t, p and the 95% interval. */
function checkBlock(r: EstimateResult, block: Expected, lag: number, label: string): void {
  expect(r.nObs, `${label} n`).toBe(block.fit.n_obs)
  expect(r.fit.kFull, `${label} K`).toBe(block.fit.k_full)
  close(r.fit.ssr, block.fit.ssr, `${label} ssr`)
  close(r.fit.sigma, block.fit.sigma, `${label} sigma`)
  close(r.fit.rSquared, block.fit.r_squared, `${label} R2`)
  expect(r.hacLag).toBe(lag)
  expect(Object.keys(r.coefficients)).toEqual(Object.keys(block.coefficients).map(ours))
  for (const [ref, x] of Object.entries(block.coefficients as Record<string, Expected>)) {
    const c = r.coefficients[ours(ref)]
    const l = `${label} ${ref} lag ${lag}`
    close(c.estimate, x.estimate, `${l} estimate`)
    close(c.seIid, x.se_iid, `${l} se_iid`)
    close(c.se, x.se_hac_variants[`NW_lag${lag}`], `${l} se`)
    expect(c.df, `${l} df`).toBe(x.df_hac)
    if (lag === e.spec.hac_lag) {
      close(c.se, x.se_hac, `${l} se_hac`)
      close(c.t, x.t_hac, `${l} t_hac`)
      closeP(c.p, x.p_hac, `${l} p_hac`)
      close(c.ciLow, x.ci95_hac[0], `${l} ci low`)
      close(c.ciHigh, x.ci95_hac[1], `${l} ci high`)
    }
  }
}

describe('c1_synthetic_cits_two_breaks (source: its README)', () => {
  it('the case is the one described: T1 against C1..C4, breaks 61 and 91, month column', () => {
    expect(c1.source).toMatch(/R 4\.2\.2/)
    const units = [...new Set(records.map((r) => String(r.unit)))].sort()
    expect(units).toEqual(['C1', 'C2', 'C3', 'C4', 'T1'])
    expect(e.spec.comparison_units).toEqual(['C1', 'C2', 'C3', 'C4'])
    expect(e.spec.breaks).toEqual([61, 91])
  })

  it('(a) single unit: its.comparison "none", every coefficient at every lag; the comparison list is ignored', () => {
    for (const lag of e.spec.hac_lags as number[]) {
      const r = estimate(c1.panel, itsSpec({ comparison: 'none', hacLag: lag }))
      checkBlock(r, e.single_unit, lag, 'single unit')
      expect(r.comparison).toBeNull()
      expect(r.nUnits).toBe(1)
      expect(r.effect.term).toBe('level_1')
    }
    // default comparison is "none"; a comparison list changes nothing there
    const a = estimate(c1.panel, itsSpec({ hacLag: 12 }))
    const b = estimate(c1.panel, itsSpec({ hacLag: 12 }, { comparison: ['C1', 'C2'] }))
    expect(b.coefficients).toEqual(a.coefficients)
    expect(b.comparison).toBeNull()
    checkBlock(a, e.single_unit, 12, 'single unit (default)')
    // NW_lag12_adjust (times N/(N-K)) is not a choice the engine offers.
  })

  it('(b) difference against the comparison mean: every coefficient, se_iid, the Newey-West SE at every lag, t, p, CI', () => {
    for (const lag of e.spec.hac_lags as number[]) {
      const r = estimate(c1.panel, itsSpec({ comparison: 'mean', hacLag: lag }))
      checkBlock(r, e.difference, lag, 'difference')
      expect(r.comparison).toEqual({ kind: 'mean', units: e.spec.comparison_units, weights: null })
      expect(r.nUnits).toBe(5)
      expect(r.nPeriods).toBe(120)
      expect(r.vcov).toBe('hac')
      expect(r.effect.term).toBe('level_1')
      close(r.effect.estimate, e.difference.coefficients.level_1.estimate, 'effect = level_1')
    }
    // the list given explicitly is the default (every unit but the treated one)
    const explicit = estimate(c1.panel, itsSpec({ comparison: 'mean', hacLag: 12 }, { comparison: e.spec.comparison_units }))
    checkBlock(explicit, e.difference, 12, 'difference (explicit list)')
    // Durbin-Watson: c1 gives none for the difference model; only that it is reported.
    expect(explicit.durbinWatson).toBeGreaterThan(0)
  })

  it('(b) warns in plain words: the rule-of-thumb lag and too few comparison units for a placebo check', () => {
    const r = estimate(c1.panel, itsSpec({ comparison: 'mean' }))
    expect(r.hacLag).toBe(4) // floor(4 (120/100)^(2/9))
    expect(r.warnings).toContain('Newey-West errors use a lag of 4 periods (the usual rule of thumb for a series of 120 periods); set its.hacLag to choose another')
    expect(r.warnings.join(" ")).toMatch(/with 4 placebos the smallest possible p-value is 1\/5 = 0\.200/)
    const single = estimate(c1.panel, itsSpec({ hacLag: 12 }))
    expect(single.warnings).toEqual([])
  })

  it('(c) stacked: the difference coefficients equal the z-interactions, and the lag-0 Newey-West SEs the period-clustered CR0 SEs', () => {
    const r = estimate(c1.panel, itsSpec({ comparison: 'mean', hacLag: 0 }))
    for (const [ref, x] of Object.entries(e.stacked.coefficients as Record<string, Expected>)) {
      const term = ref.replace(/^z_/, '')
      const c = r.coefficients[ours(term)]
      close(c.estimate, x.estimate, `${ref} estimate`)
      close(c.se, x.se_cluster_variants.CR0, `${ref} NW lag 0 = stacked CR0`)
    }
  })

  it('(c) stacked: the same stacked regression fitted by the engine matches the reference (se_iid, CR1 by period)', () => {
    // 2N rows: the treated series (z = 1) and the comparison-mean series (z = 0), every term and its z-interaction.
    const N = e.n_periods as number
    const y = new Float64Array(2 * N)
    const cols: Record<string, Float64Array> = {}
    const names = ['time', 'level_1', 'slope_1', 'level_2', 'slope_2', ...Array.from({ length: 11 }, (_, k) => `month_${k + 2}`)]
    for (const nm of [...names, 'z', ...names.map((n) => `z_${n}`)]) cols[nm] = new Float64Array(2 * N)
    const treatedRows = records.filter((row) => row.unit === 'T1')
    expect(treatedRows.length).toBe(N)
    treatedRows.forEach((row, t) => {
      y[t] = e.series.treated[t]
      y[N + t] = e.series.comparison_mean[t]
      const month = Number(row.month)
      const v: Record<string, number> = { time: Number(row.time), level_1: Number(row.level_1), slope_1: Number(row.slope_1), level_2: Number(row.level_2), slope_2: Number(row.slope_2) }
      for (let m = 2; m <= 12; m++) v[`month_${m}`] = month === m ? 1 : 0
      for (const nm of names) {
        cols[nm][t] = v[nm]
        cols[nm][N + t] = v[nm]
        cols[`z_${nm}`][t] = v[nm]
      }
      cols.z[t] = 1
    })
    const cluster = Int32Array.from({ length: 2 * N }, (_, i) => i % N)
    const terms = Object.entries(cols).map(([name, values]) => ({ name, values }))
    const fit = fitLinearModel({ y, terms, intercept: true, covariance: { kind: 'cluster', cluster, nClusters: N, smallSample: 'full' } })
    const s = e.stacked
    close(fit.ssr, s.fit.ssr, 'stacked ssr')
    expect(fit.kFull).toBe(s.fit.k_full)
    for (const [ref, x] of Object.entries(s.coefficients as Record<string, Expected>)) {
      const j = fit.names.indexOf(ref === 'z_intercept' ? 'z' : ref)
      close(fit.beta[j], x.estimate, `${ref} estimate`)
      close(Math.sqrt(fit.vcovIid.get(j, j)), x.se_iid, `${ref} se_iid (pooled, df ${x.df_iid})`)
      close(Math.sqrt(fit.vcov.get(j, j)), x.se_cluster, `${ref} se_cluster (CR1, K full)`)
    }
    expect(fit.df).toBe(N - 1)
  })

  it('"mean" drops a period where a comparison unit lacks the outcome, and says how many', () => {
    const gap = records.map((r) => (r.unit === 'C3' && Number(r.period) === 40 ? { ...r, outcome: '' } : r))
    const r = estimate({ records: gap }, itsSpec({ comparison: 'mean', hacLag: 12 }))
    expect(r.nObs).toBe(119)
    expect(r.warnings.join(' ')).toMatch(/dropped 1 period where a comparison unit has no outcome value \("C3"\)/)
    expect(r.warnings.join(' ')).toMatch(/1 missing period between its ends/)
    // the treated unit's own missing row drops the period too (as a missing value)
    const own = records.map((r) => (r.unit === 'T1' && Number(r.period) === 40 ? { ...r, outcome: 'NA' } : r))
    expect(estimate({ records: own }, itsSpec({ comparison: 'mean', hacLag: 12 })).nObs).toBe(119)
  })

  it('"synthetic" on c1: weights on the simplex, and a warning that T1 lies outside the comparison units (no reference values)', () => {
    const r = estimate(c1.panel, itsSpec({ comparison: 'synthetic', hacLag: 12 }))
    const w = Object.values(r.comparison!.weights!)
    expect(w.length).toBe(4)
    expect(w.every((x) => x >= 0)).toBe(true)
    expect(w.reduce((s, x) => s + x, 0)).toBeCloseTo(1, 12)
    expect(r.warnings.join(' ')).toMatch(/the treated unit lies above or below every comparison unit in \d+ of the 60 periods before the first break/)
    expect(Object.keys(r.coefficients)).toEqual(Object.keys(e.difference.coefficients).map(ours))
  })

  it('refuses a comparison with no units, and breaks outside the series (naming the break and the range)', () => {
    fails(() => estimate(c1.panel, itsSpec({ comparison: 'mean' }, { comparison: [] })), 'invalid_spec', /its\.comparison "mean" needs comparison units, but spec\.comparison lists no unit/)
    const alone = records.filter((r) => r.unit === 'T1')
    fails(() => estimate({ records: alone }, itsSpec({ comparison: 'mean' })), 'invalid_spec', /the panel has no unit besides the treated one/)
    fails(() => estimate(c1.panel, itsSpec({ comparison: 'mean' }, { treated: [] })), 'invalid_spec', /list exactly one unit in treated \(got 0\)/)
    fails(() => estimate(c1.panel, itsSpec({ comparison: 'mean', breaks: [1, 61] })), 'no_pre_periods', /the first break 1 is not after the first period of the series \(the series runs from 1 to 120\)/)
    fails(() => estimate(c1.panel, itsSpec({ comparison: 'mean', breaks: [61, 121] })), 'no_post_periods', /the break 121 comes after the last period of the series \(the series runs from 1 to 120\)/)
    fails(() => estimate(c1.panel, itsSpec({ comparison: 'none', breaks: [0] })), 'no_pre_periods', /break 0 .*runs from 1 to 120/)
    fails(() => estimate(c1.panel, itsSpec({ comparison: 'synthetic' }, { comparison: ['C1'] })), 'invalid_spec', /needs at least two comparison units .* \(1 usable of 1\)/)
    fails(() => estimate(c1.panel, { design: 'its', treated: ['T1'], its: { breaks: [61], seasonality: 'month' } }), 'invalid_spec', /needs dated periods .* or its\.seasonColumn/)
    // count families model one series: a difference of counts is not a count (tests/engine/itsModels.test.ts has the rest)
    fails(() => estimate(c1.panel, itsSpec({ comparison: 'mean', family: 'poisson' })), 'invalid_spec', /a difference of counts is not a count/)
  })
})

describe('comparative ITS on invented panels', () => {
  // monthly 2015-01..2019-12; break at 2018-01
  const months = Array.from({ length: 60 }, (_, i) => `${2015 + Math.floor(i / 12)}-${String((i % 12) + 1).padStart(2, '0')}`)
  const after = (i: number) => (i >= 36 ? 1 : 0)
  const wiggle = (i: number, u: number) => 0.001 * Math.sin(1.7 * i + u)

  it('transform "log": the comparison is the mean of the logged outcomes', () => {
    const rows: TypedRow[] = []
    months.forEach((p, i) => {
      rows.push({ unit: 'C1', period: p, values: { y: Math.exp(1 + 0.01 * i + wiggle(i, 1)) } })
      rows.push({ unit: 'C2', period: p, values: { y: Math.exp(2 + 0.01 * i + wiggle(i, 2)) } })
      rows.push({ unit: 'T', period: p, values: { y: Math.exp(0.5 + 0.01 * i + 0.2 * after(i) + (wiggle(i, 1) + wiggle(i, 2)) / 2) } })
    })
    // log T - (log C1 + log C2)/2 = -1 + 0.2 level, exactly
    const r = estimate({ rows }, { design: 'its', outcome: 'y', transform: 'log', treated: ['T'], its: { breaks: ['2018-01'], comparison: 'mean', hacLag: 2 } })
    expect(r.coefficients.level.estimate).toBeCloseTo(0.2, 12)
    expect(r.coefficients.intercept.estimate).toBeCloseTo(-1, 12)
    expect(r.coefficients.slope.estimate).toBeCloseTo(0, 12)
    expect(r.coefficients.time.estimate).toBeCloseTo(0, 12)
  })

  it('seasonality from dated periods works with a comparison', () => {
    const rows: TypedRow[] = []
    months.forEach((p, i) => {
      const m = (i % 12) + 1
      rows.push({ unit: 'A', period: p, values: { y: 5 + 0.3 * i + (m === 7 ? 2 : 0) + Math.sin(i) } })
      rows.push({ unit: 'T', period: p, values: { y: 8 + 0.3 * i + (m === 7 ? 3 : 0) + Math.sin(i) - 1.5 * after(i) + 0.01 * Math.cos(2.3 * i) } })
    })
    const r = estimate({ rows }, { design: 'its', outcome: 'y', treated: ['T'], start: '2018-01', its: { seasonality: 'month', comparison: 'mean', hacLag: 3 } })
    expect(r.coefficients.season_7.estimate).toBeCloseTo(1, 1)
    expect(r.coefficients.level.estimate).toBeCloseTo(-1.5, 1)
    expect(r.comparison).toEqual({ kind: 'mean', units: ['A'], weights: null })
    // one comparison unit cannot serve as a placebo (it would have no pool of its own)
    expect(r.inference!.method).toBe('analytic')
    expect(r.inference!.reason).toMatch(/no comparison unit can serve as a placebo/)
  })

  it('"synthetic": a treated unit that is exactly 0.3 A + 0.7 B before the break gives those weights and the exact level change', () => {
    const rows: TypedRow[] = []
    months.forEach((p, i) => {
      const a = 10 + Math.sin(0.9 * i) + 0.05 * i
      const b = 20 + Math.cos(0.7 * i) - 0.02 * i
      const c = 15 + 0.8 * Math.sin(1.3 * i + 0.4)
      const d = 12 + 0.5 * Math.cos(2.1 * i) + 0.03 * i
      rows.push({ unit: 'A', period: p, values: { y: a } }, { unit: 'B', period: p, values: { y: b } }, { unit: 'C', period: p, values: { y: c } }, { unit: 'D', period: p, values: { y: d } })
      rows.push({ unit: 'T', period: p, values: { y: 0.3 * a + 0.7 * b + (after(i) ? 2.5 + 0.1 * (i - 36) : 0) } })
    })
    const r = estimate({ rows }, { design: 'its', outcome: 'y', treated: ['T'], its: { breaks: ['2018-01'], comparison: 'synthetic', hacLag: 2 } })
    expect(r.comparison!.kind).toBe('synthetic')
    expect(r.comparison!.units).toEqual(['A', 'B', 'C', 'D'])
    const w = r.comparison!.weights!
    expect(w.A).toBeCloseTo(0.3, 8)
    expect(w.B).toBeCloseTo(0.7, 8)
    expect(w.C).toBeCloseTo(0, 8)
    expect(w.D).toBeCloseTo(0, 8)
    expect(r.coefficients.level.estimate).toBeCloseTo(2.5, 8)
    expect(r.coefficients.slope.estimate).toBeCloseTo(0.1, 8)
    expect(r.coefficients.intercept.estimate).toBeCloseTo(0, 8)
    expect(r.effect.term).toBe('level')
    expect(r.nUnits).toBe(5)

    // a donor missing a value is left out, named in a warning; the fit is unchanged
    const gappy = rows.filter((x) => !(x.unit === 'D' && x.period === '2016-05'))
    const g = estimate({ rows: gappy }, { design: 'its', outcome: 'y', treated: ['T'], its: { breaks: ['2018-01'], comparison: 'synthetic', hacLag: 2 } })
    expect(g.comparison!.units).toEqual(['A', 'B', 'C'])
    expect(g.warnings.join(' ')).toMatch(/left out 1 comparison unit with missing outcome values .*"D" \(1 of 60 periods missing\)/)
    expect(g.coefficients.level.estimate).toBeCloseTo(2.5, 8)
    expect(g.nObs).toBe(60)
  })
})

describe('did.phases', () => {
  // 2 treated units from period 5, 4 comparison units, periods 1..12; a later intervention at 9.
  const units = ['T1', 'T2', 'C1', 'C2', 'C3', 'C4']
  function panel(effect: (t: number) => number, noise: (u: number, t: number) => number): TypedRow[] {
    const rows: TypedRow[] = []
    units.forEach((u, k) => {
      for (let t = 1; t <= 12; t++) rows.push({ unit: u, period: t, values: { y: 3 * k + 0.5 * t + Math.sin(t) + (u.startsWith('T') ? effect(t) : 0) + noise(k, t) } })
    })
    return rows
  }
  const phaseEffect = (t: number) => (t >= 9 ? 5 : t >= 5 ? 2 : 0)
  const spec = { design: 'did', outcome: 'y', treated: ['T1', 'T2'], start: 5 }

  it('recovers phase_1 and phase_2 exactly without noise; the effect is phase_1', () => {
    const r = estimate({ rows: panel(phaseEffect, () => 0) }, { ...spec, did: { phases: [9] } })
    expect(Object.keys(r.coefficients)).toEqual(['phase_1', 'phase_2', 'phase_2_vs_1'])
    expect(r.coefficients.phase_2_vs_1!.estimate).toBeCloseTo(3, 10)
    expect(r.coefficients.phase_1.estimate).toBeCloseTo(2, 12)
    expect(r.coefficients.phase_2.estimate).toBeCloseTo(5, 12)
    expect(r.effect.term).toBe('phase_1')
    expect(r.effect.estimate).toBeCloseTo(2, 12)
    expect(r.vcov).toBe('cluster')
  })

  it('with one effect throughout, each phase equals the single estimate', () => {
    const rows = panel((t) => (t >= 5 ? 3 : 0), () => 0)
    const single = estimate({ rows }, spec)
    const phased = estimate({ rows }, { ...spec, did: { phases: [9] } })
    expect(single.effect.estimate).toBeCloseTo(3, 12)
    expect(phased.coefficients.phase_1.estimate).toBeCloseTo(single.effect.estimate, 12)
    expect(phased.coefficients.phase_2.estimate).toBeCloseTo(single.effect.estimate, 12)
  })

  it('with noise on a balanced panel, the single estimate is the period-weighted mean of the phases', () => {
    const rows = panel(phaseEffect, (u, t) => 0.7 * Math.sin(3.1 * u + 1.9 * t) + 0.2 * Math.cos(u * t))
    const single = estimate({ rows }, spec)
    const phased = estimate({ rows }, { ...spec, did: { phases: [9] } })
    const b1 = phased.coefficients.phase_1.estimate
    const b2 = phased.coefficients.phase_2.estimate
    expect(single.effect.estimate).toBeCloseTo((4 * b1 + 4 * b2) / 8, 12) // periods 5-8 and 9-12
    const three = estimate({ rows }, { ...spec, did: { phases: [11, 8] } }) // order does not matter
    expect(Object.keys(three.coefficients)).toEqual(['phase_1', 'phase_2', 'phase_3', 'phase_2_vs_1', 'phase_3_vs_2'])
    const m = three.coefficients
    expect(single.effect.estimate).toBeCloseTo((3 * m.phase_1.estimate + 3 * m.phase_2.estimate + 2 * m.phase_3.estimate) / 8, 12) // 5-7, 8-10, 11-12
  })

  it('works with starts that differ by unit (phases after the latest start)', () => {
    const rows = panel(phaseEffect, () => 0).map((r) => (r.unit === 'T2' && r.period === 5 ? { ...r, values: { y: (r.values.y as number) - 2 } } : r))
    const r = estimate({ rows }, { ...spec, start: { T1: 5, T2: 6 }, did: { phases: [9] } })
    expect(r.coefficients.phase_1.estimate).toBeCloseTo(2, 12)
    expect(r.coefficients.phase_2.estimate).toBeCloseTo(5, 12)
    fails(() => estimate({ rows }, { ...spec, start: { T1: 5, T2: 6 }, did: { phases: [6] } }), 'invalid_spec', /phase start 6 is not after the latest start 6/)
  })

  it('refuses the 2x2 form, a phase start not after the start or outside the data, and a treatment column', () => {
    const rows = panel(phaseEffect, () => 0)
    fails(() => estimate({ rows }, { ...spec, did: { form: '2x2', phases: [9] } }), 'invalid_spec', /did\.phases needs the two-way form.*use did form "twfe"/)
    fails(() => estimate({ rows }, { ...spec, did: { phases: [5] } }), 'invalid_spec', /phase start 5 is not after the start 5/)
    fails(() => estimate({ rows }, { ...spec, did: { phases: [3, 9] } }), 'invalid_spec', /phase start 3 is not after the start 5/)
    fails(() => estimate({ rows }, { ...spec, did: { phases: [13] } }), 'invalid_spec', /phase start 13 is outside the data: the treated units' last period is 12/)
    fails(() => estimate({ rows }, { ...spec, window: { pre: [1, 4], post: [5, 8] }, did: { phases: [10] } }), 'invalid_spec', /outside the data: the treated units' last period is 8 within the window/)
    const withD = rows.map((r) => ({ ...r, values: { ...r.values, d: r.unit.startsWith('T') && (r.period as number) >= 5 ? 1 : 0 } }))
    fails(() => estimate({ rows: withD }, { design: 'did', outcome: 'y', treatmentColumn: 'd', did: { phases: [9] } }), 'invalid_spec', /does not apply to a treatmentColumn/)
  })
})
