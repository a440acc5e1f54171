// Every refusal of the engine, asserted by its message (and code). Panels are the reference
// panels (tests/fixtures/reference) with cells changed by hand.
import { describe, expect, it } from 'vitest'
import { EngineError, estimate, scoreDonors } from '../../server/engine/index'
import type { CsvRecord, TypedRow } from '../../server/engine/panel'
import { loadCase, fails } from './helpers'

const fat = loadCase('a1_fatalities_twfe_beertax').panel as { records: CsvRecord[] }
const syn = loadCase('a3_synthetic_twfe')
const synRecords = (syn.panel as { records: CsvRecord[] }).records
const treated = syn.expected.treated_units as string[]


const edit = (records: CsvRecord[], i: number, patch: CsvRecord) => records.map((r, k) => (k === i ? { ...r, ...patch } : r))

describe('engine errors', () => {
  it('unknown units', () => {
    fails(() => estimate(syn.panel, { design: 'did', treated: ['u02', 'nowhere'], start: 11 }), 'unknown_unit', /unknown unit "nowhere" in treated: not in the panel/)
    fails(() => estimate(syn.panel, { design: 'did', treated, start: 11, comparison: ['u01', 'x9', 'x8'] }), 'unknown_unit', /unknown units "x9", "x8" in comparison/)
  })
  it('unknown columns', () => {
    fails(() => estimate(fat, { design: 'did', treatmentColumn: 'beertax', outcome: 'deaths' }), 'unknown_column', /unknown column "deaths" \(value\): the panel has "unit", "period", "outcome"/)
    fails(() => estimate(fat, { design: 'did', treatmentColumn: 'beertax', covariates: ['income'] }), 'unknown_column', /unknown column "income"/)
    fails(() => estimate(fat, { design: 'did', treatmentColumn: 'beertax', unit: 'state' }), 'unknown_column', /unknown column "state" \(unit\)/)
    const rows: TypedRow[] = [{ unit: 'a', period: 1, values: { y: 1 } }]
    fails(() => estimate({ rows }, { design: 'did', outcome: 'z', treatmentColumn: 'y' }), 'unknown_column', /unknown column "z" \(value\): the panel has "y"/)
  })
  it('no pre-periods and no post-periods', () => {
    fails(() => estimate(syn.panel, { design: 'did', treated, start: 1 }), 'no_pre_periods', /no pre-periods: the treated units have no rows before their start \(start 1\)/)
    fails(() => estimate(syn.panel, { design: 'did', treated, start: 21 }), 'no_post_periods', /no post-periods: the treated units have no rows from their start on \(start 21\)/)
    fails(() => estimate(syn.panel, { design: 'event_study', treated, start: 1 }), 'no_pre_periods', /no pre-periods/)
    fails(() => estimate(syn.panel, { design: 'its', treated: ['u02'], its: { breaks: [1] } }), 'no_pre_periods', /no pre-periods: the first break 1 is not after the first period/)
    fails(() => estimate(syn.panel, { design: 'its', treated: ['u02'], its: { breaks: [25] } }), 'no_post_periods', /no post-periods: the break 25 comes after the last period/)
    fails(() => scoreDonors(syn.panel, { design: 'did', treated, start: 1 }), 'no_pre_periods', /no pre-periods/)
  })
  it('a single cluster', () => {
    fails(() => estimate(syn.panel, { design: 'did', treated: ['u02'], start: 11, comparison: [], fixedEffects: 'unit' }), 'single_cluster', /cluster-robust errors need at least two clusters, but the data have 1; use cluster "none"/)
  })
  it('a singular design names the collinear terms', () => {
    const twice = { records: fat.records.map((r) => ({ ...r, tax2: String(2 * Number(r.beertax) - Number(r.unemp)) })) }
    fails(
      () => estimate(twice, { design: 'did', treatmentColumn: 'beertax', covariates: ['unemp', 'tax2'] }),
      'singular_design',
      /singular design: term "tax2" is a linear combination of "beertax", "unemp" \(collinear terms: "beertax", "unemp", "tax2"\)/,
    )
    const constant = { records: fat.records.map((r) => ({ ...r, region: r.unit === 'al' ? '1' : '2' })) }
    fails(() => estimate(constant, { design: 'did', treatmentColumn: 'beertax', covariates: ['region'] }), 'singular_design', /term "region" is absorbed by the unit and period fixed effects/)
    const allZero = { records: fat.records.map((r) => ({ ...r, z: '0' })) }
    fails(() => estimate(allZero, { design: 'did', treatmentColumn: 'z' }), 'singular_design', /term "z" is absorbed/)
  })
  it('non-numeric cells name the line and column', () => {
    fails(() => estimate({ records: edit(fat.records, 5, { beertax: 'abc' }) }, { design: 'did', treatmentColumn: 'beertax' }), 'non_numeric', /line 7, column "beertax": "abc" is not a number/)
    fails(() => estimate({ records: edit(fat.records, 0, { outcome: '1,5' }) }, { design: 'did', treatmentColumn: 'beertax' }), 'non_numeric', /line 2, column "outcome": "1,5" is not a number/)
    const rows: TypedRow[] = [{ unit: 'a', period: 1, values: { y: Infinity } }]
    fails(() => estimate({ rows }, { design: 'did', outcome: 'y', treatmentColumn: 'y' }), 'non_numeric', /row 1, column "y"/)
  })
  it('missing cells are dropped with a warning saying how many', () => {
    const r = estimate({ records: edit(edit(fat.records, 3, { outcome: 'NA' }), 9, { beertax: '' }) }, { design: 'did', treatmentColumn: 'beertax' })
    expect(r.nObs).toBe(334)
    expect(r.warnings).toContain('dropped 2 rows with missing values (outcome: 1, beertax: 1)')
  })
  it('unknown spec keys and bad values', () => {
    fails(() => estimate(fat, { design: 'did', treatmentColumn: 'beertax', clusters: 'unit' }), 'invalid_spec', /invalid spec: spec: unknown key "clusters"/)
    fails(() => estimate(fat, { design: 'did', did: { form: '2x2', extra: 1 } }), 'invalid_spec', /spec\.did: unknown key "extra"/)
    fails(() => estimate(fat, { design: 'regression' }), 'invalid_spec', /spec\.design: Invalid option/)
    fails(() => estimate(fat, { design: 'did', smallSample: 'HC1' }), 'invalid_spec', /spec\.smallSample/)
    fails(() => estimate(fat, [1]), 'invalid_spec', /the spec must be a JSON object/)
    fails(() => estimate(fat, { design: 'did', treated: ['al'] }), 'invalid_spec', /needs the first treated period: set spec.start/)
    fails(() => estimate(fat, { design: 'did', treated: ['al'], start: { ar: 1984 } }), 'invalid_spec', /start names "ar", which is not in treated/)
  })
  it('log of non-positive values', () => {
    fails(
      () => estimate({ records: edit(fat.records, 2, { outcome: '0' }) }, { design: 'did', treatmentColumn: 'beertax', transform: 'log' }),
      'non_positive_log',
      /transform "log": outcome "outcome" has 1 value <= 0, which have no logarithm \(first: unit "al", period 1984, value 0\)/,
    )
  })
  it('staggered adoption refuses the wild bootstrap (placebo adopters or influence functions instead)', () => {
    fails(() => estimate(syn.panel, { design: 'staggered', treated, start: 11, inference: { method: 'wild_bootstrap' } }), 'invalid_spec', /inference\.method "wild_bootstrap" is not available for design "staggered": use "permutation"/)
  })
  it('bad periods and duplicate rows', () => {
    fails(() => estimate({ records: edit(fat.records, 4, { period: 'spring' }) }, { design: 'did', treatmentColumn: 'beertax' }), 'bad_period', /line 6, column "period": cannot read "spring" as a period/)
    fails(() => estimate({ records: edit(fat.records, 4, { period: '1982-Q1' }) }, { design: 'did', treatmentColumn: 'beertax' }), 'bad_period', /periods mix frequencies/)
    fails(() => estimate({ records: edit(fat.records, 1, { period: '1982' }) }, { design: 'did', treatmentColumn: 'beertax' }), 'duplicate_row', /duplicate rows for unit "al", period 1982 \(lines 2 and 3\)/)
    fails(() => estimate(syn.panel, { design: 'did', treated, start: '1990-01' }), 'bad_period', /start: period "1990-01" is a month, but the panel's periods are integers/)
  })
  it('design-specific refusals', () => {
    fails(() => estimate(syn.panel, { design: 'its', treated }), 'invalid_spec', /design "its" models one unit: list exactly one unit in treated \(got 5\)/)
    fails(() => estimate(syn.panel, { design: 'its', treated: ['u02'] }), 'invalid_spec', /design "its" needs a break/)
    fails(() => estimate(syn.panel, { design: 'did', did: { form: '2x2' }, treated: ['u02', 'u03'], start: { u02: 11, u03: 12 } }), 'invalid_spec', /2x2" needs one start shared by all treated units/)
    fails(() => estimate(syn.panel, { design: 'did' }), 'invalid_spec', /design "did" needs at least one treated unit/)
    fails(() => scoreDonors(syn.panel, { design: 'did', treated, start: 11 }, { closeness: 1 } as never), 'invalid_input', /unknown donor score "closeness"/)
    fails(() => estimate({ records: synRecords.slice(0, 2) }, { design: 'did', treated: ['u01'], start: 2, comparison: [], fixedEffects: 'unit', cluster: 'none' }), 'too_few_observations', /too few observations/)
  })
})
