// Behaviour of each design beyond the reference cases: codings, defaults, warnings. Panels
// are small synthetic ones built here with known structure (values derived by hand), or the
// reference panels of tests/fixtures/reference.
import { describe, expect, it } from 'vitest'
import { estimate as engineEstimate, scoreDonors } from '../../server/engine/index'
import type { TypedRow } from '../../server/engine/panel'
import { safeParseSpec } from '../../shared/engine/spec'
import { loadCase } from './helpers'

/** These cases check the analytic (model-based) numbers: the headline inference is tested in permutation.test.ts. */
const estimate: typeof engineEstimate = (panel, spec) => engineEstimate(panel, { inference: { method: 'analytic' }, ...(spec as object) })

const syn = loadCase('a3_synthetic_twfe')
const treated = syn.expected.treated_units as string[]

describe('spec defaults', () => {
  it('fills the defaults DESIGN.md names', () => {
    const r = safeParseSpec({ design: 'did' })
    expect(r.ok && r.spec).toMatchObject({ unit: 'unit', period: 'period', outcome: 'outcome', transform: 'level', fixedEffects: 'two-way', cluster: 'unit', smallSample: 'nested', did: { form: 'twfe' } })
    const e = safeParseSpec({ design: 'event_study', eventWindow: { from: -3, to: 3 } })
    expect(e.ok && e.spec.eventWindow).toEqual({ from: -3, to: 3, reference: -1, bin: true })
    const bad = safeParseSpec({ design: 'did', eventWindow: { from: 3, to: -3 } })
    expect(bad.ok).toBe(false)
  })
})

describe('its', () => {
  // quarterly series 2000-Q1..2009-Q4: y = 10 + 0.5 time + 3 [t >= 2005-Q1] + 0.2 slope + Q3 bump 1.5 + small wiggle
  const rows: TypedRow[] = []
  for (let i = 0; i < 40; i++) {
    const year = 2000 + Math.floor(i / 4)
    const q = (i % 4) + 1
    const time = i + 1
    const after = i >= 20 ? 1 : 0
    rows.push({ unit: 'A', period: `${year}-Q${q}`, values: { y: 10 + 0.5 * time + 3 * after + 0.2 * after * (i - 20) + (q === 3 ? 1.5 : 0) + 0.01 * Math.sin(i * 1.7) } })
  }
  it('codes time, level, slope and seasons from dated periods', () => {
    const r = estimate({ rows }, { design: 'its', outcome: 'y', start: '2005-Q1', its: { seasonality: 'quarter', hacLag: 2 } })
    expect(Object.keys(r.coefficients)).toEqual(['intercept', 'time', 'level', 'slope', 'season_2', 'season_3', 'season_4'])
    expect(r.coefficients.level.estimate).toBeCloseTo(3, 1)
    expect(r.coefficients.slope.estimate).toBeCloseTo(0.2, 2)
    expect(r.coefficients.season_3.estimate).toBeCloseTo(1.5, 1)
    expect(r.effect.term).toBe('level')
    expect(r.vcov).toBe('hac')
    expect(r.coefficients.level.df).toBe(40 - 7)
    expect(r.durbinWatson).toBeGreaterThan(0)
  })
  it('names several breaks level_1, slope_1, ... and picks a default lag with a warning', () => {
    const r = estimate({ rows }, { design: 'its', outcome: 'y', its: { breaks: ['2005-Q1', '2007-Q1'] } })
    expect(Object.keys(r.coefficients)).toEqual(['intercept', 'time', 'level_1', 'slope_1', 'level_2', 'slope_2'])
    expect(r.effect.term).toBe('level_1')
    expect(r.hacLag).toBe(3)
    expect(r.warnings.join(' ')).toMatch(/Newey-West errors use a lag of 3 periods .*set its\.hacLag/)
  })
  it('keeps gaps in the time count and warns', () => {
    const gappy = rows.filter((_, i) => i !== 7 && i !== 30)
    const r = estimate({ rows: gappy }, { design: 'its', outcome: 'y', start: '2005-Q1', its: { hacLag: 1 } })
    expect(r.nObs).toBe(38)
    expect(r.warnings.join(' ')).toMatch(/2 missing periods/)
  })
})

describe('pre_post', () => {
  it('is flagged as weak and compares means', () => {
    const rows: TypedRow[] = [1, 2, 3, 4, 5, 6].map((t) => ({ unit: 'A', period: 2000 + t, values: { y: t <= 3 ? 10 + t : 20 + t } }))
    const r = estimate({ rows }, { design: 'pre_post', outcome: 'y', treated: ['A'], start: 2004 })
    expect(r.effect.estimate).toBeCloseTo(13, 12) // means 12 and 25
    expect(r.warnings[0]).toMatch(/pre\/post is weak evidence/)
    expect(r.vcov).toBe('hc1')
  })
  it('clusters by unit with several treated units', () => {
    const r = estimate(syn.panel, { design: 'pre_post', treated, start: 11 })
    expect(r.vcov).toBe('cluster')
    expect(r.nClusters).toBe(5)
    expect(r.nUnits).toBe(5)
  })
})

describe('did', () => {
  it('restricts to the window and to the comparison units', () => {
    const r = estimate(syn.panel, { design: 'did', treated, comparison: ['u01', 'u04', 'u05'], window: { pre: [6, 10], post: [11, 13] } })
    expect(r.nUnits).toBe(8)
    expect(r.nPeriods).toBe(8)
    expect(r.nObs).toBe(64)
  })
  it('warns when starts differ across treated units', () => {
    const r = estimate(syn.panel, { design: 'did', treated: ['u02', 'u03'], start: { u02: 11, u03: 13 } })
    expect(r.warnings.join(' ')).toMatch(/start at different periods/)
  })
  it('reports the pre-trend slope difference for the TWFE form (same rows as the event-study reference)', () => {
    const x = loadCase('a3_synthetic_event_study').expected.tests.pretrend_slope_diff.coefficients.treated_x_period
    const r = estimate(syn.panel, { design: 'did', treated, start: 11, smallSample: 'full' })
    expect(r.preTrend!.slopeDiff!.estimate).toBeCloseTo(x.estimate, 9)
    expect(r.preTrend!.slopeDiff!.se).toBeCloseTo(x.se_cluster, 9)
  })
  it('accepts typed rows with monthly periods and a log outcome', () => {
    const rows: TypedRow[] = []
    for (const u of ['a', 'b', 'c']) for (let m = 1; m <= 12; m++) rows.push({ unit: u, period: `2020-${String(m).padStart(2, '0')}`, values: { y: Math.exp(1 + (u === 'a' && m >= 7 ? 0.1 : 0) + m / 100 + (u === 'b' ? 0.3 : 0) + 0.01 * Math.cos(m * (u.charCodeAt(0) - 90))) } })
    const r = estimate({ rows }, { design: 'did', outcome: 'y', transform: 'log', treated: ['a'], start: '2020-07', cluster: 'none' })
    expect(r.effect.estimate).toBeCloseTo(0.1, 1)
    expect(r.vcov).toBe('iid')
    expect(r.warnings.join(' ')).toMatch(/not clustered/)
  })
})

describe('event study', () => {
  it('defaults the window to the observed relative times, with the reference at -1', () => {
    const r = estimate(syn.panel, { design: 'event_study', treated, start: 11 })
    expect(r.eventStudy!.map((p) => p.relTime)).toEqual(Array.from({ length: 20 }, (_, i) => i - 10))
    expect(r.eventStudy!.find((p) => p.relTime === -1)).toMatchObject({ reference: true, estimate: 0 })
    expect(r.effect.term).toBe('mean_post')
    const lags = r.eventStudy!.filter((p) => p.relTime >= 0)
    expect(r.effect.estimate).toBeCloseTo(lags.reduce((s, p) => s + p.estimate, 0) / lags.length, 10)
  })
  it('without bin drops treated rows outside the window, with a warning', () => {
    const r = estimate(syn.panel, { design: 'event_study', treated, start: 11, eventWindow: { from: -3, to: 3, bin: false } })
    expect(r.nObs).toBe(600 - 5 * 13)
    expect(r.warnings.join(' ')).toMatch(/dropped 65 treated rows outside the event window -3\.\.3/)
    expect(r.eventStudy!.every((p) => p.bin === null)).toBe(true)
  })
  it('handles staggered starts (no slope test without a common start)', () => {
    const start = Object.fromEntries(treated.map((u, i) => [u, 9 + i]))
    const r = estimate(syn.panel, { design: 'event_study', treated, start, eventWindow: { from: -4, to: 4 } })
    expect(r.preTrend!.wald!.df1).toBe(3)
    expect(r.preTrend!.slopeDiff).toBeNull()
  })
})

describe('donor scores', () => {
  it('scores against the mean of several treated units, with covariates and missing cells', () => {
    const rows: TypedRow[] = []
    for (const [u, shift, slope] of [['t1', 0, 1], ['t2', 2, 1], ['d1', 1, 1], ['d2', 5, 1], ['d3', 1, 2]] as const) {
      for (let t = 1; t <= 6; t++) rows.push({ unit: u, period: t, values: { y: shift + slope * t + (u === 'd1' && t === 2 ? 0.5 : 0), x: u === 'd2' ? 9 : 1 + (u === 'd3' ? 1 : 0) } })
    }
    rows.splice(rows.findIndex((r) => r.unit === 'd3' && r.period === 3), 1)
    const s = scoreDonors({ rows }, { design: 'did', outcome: 'y', treated: ['t1', 't2'], start: 5, covariates: ['x'] })
    expect(s.target).toEqual(['t1', 't2'])
    expect(s.prePeriods).toEqual(['1', '2', '3', '4'])
    const d2 = s.rows.find((r) => r.unit === 'd2')!
    expect(d2.rmspe).toBeCloseTo(4, 12) // target = 1 + t, d2 = 5 + t
    expect(d2.rmspeDemeaned).toBeCloseTo(0, 12)
    expect(d2.correlation).toBeCloseTo(1, 12)
    expect(d2.slopeDiff).toBeCloseTo(0, 12)
    const d3 = s.rows.find((r) => r.unit === 'd3')!
    expect(d3.missingShare).toBe(0.25)
    expect(d3.exclusions).toEqual([{ reason: 'missing data', detail: '1 of 4 pre-periods missing' }])
    expect(d3.slopeDiff).toBeCloseTo(-1, 12)
    // covariate means: target 1, d1 1, d2 9, d3 2; sd across candidates of (1, 9, 2)
    const sd = Math.sqrt(((1 - 4) ** 2 + (9 - 4) ** 2 + (2 - 4) ** 2) / 2)
    expect(d2.covariateDistance).toBeCloseTo(8 / sd, 12)
    expect(s.rows.find((r) => r.unit === 'd1')!.covariateDistance).toBeCloseTo(0, 12)
    // weights move the composite rank
    const byLevel = scoreDonors({ rows }, { design: 'did', outcome: 'y', treated: ['t1', 't2'], start: 5 }, { rmspe: 1 })
    expect(byLevel.rows[0].unit).toBe('d1')
    const byShape = scoreDonors({ rows }, { design: 'did', outcome: 'y', treated: ['t1', 't2'], start: 5 }, { rmspeDemeaned: 1, slopeDiff: 1 })
    expect(byShape.rows[0].unit).toBe('d2')
    expect(byShape.rows.map((r) => r.rank)).toEqual([1, 2, 3])
  })
})
