/** buildRunSpec: the study's fields, the pool as comparison, and the defaults a run gets. */
import { describe, expect, it } from 'vitest'
import { parseSpec } from '../../../../server/engine'
import { buildRunSpec, isCountModel, laterInterventions, runUsesPool } from '../../../../server/services/studies/spec'

const study = {
  treated: ['A'],
  start: '2017-07',
  interventions: [{ jurisdiction: 'A', period: '2017-07', label: 'adopted' }, { jurisdiction: 'A', period: '2020-01', label: 'strengthened' }],
  window: null,
  covariates: ['rent'],
  transform: 'rate' as const,
}
const periods = Array.from({ length: 13 * 12 }, (_, i) => `${2012 + Math.floor(i / 12)}-${String((i % 12) + 1).padStart(2, '0')}`)
const pool = Array.from({ length: 20 }, (_, i) => `D${i}`)

describe('buildRunSpec', () => {
  it('did: the pool is the comparison; a rate is analysed in levels', () => {
    const spec = parseSpec(buildRunSpec(study, 'did', {}, pool, periods))
    expect(spec).toMatchObject({ design: 'did', outcome: 'outcome', treated: ['A'], start: '2017-07', comparison: pool, covariates: ['rent'], transform: 'level' })
  })

  it('event study: a year either side for monthly data, fewer leads than clusters', () => {
    expect(buildRunSpec(study, 'event_study', {}, pool, periods).eventWindow).toEqual({ from: -12, to: 12, reference: -1, bin: true })
    expect(buildRunSpec(study, 'event_study', {}, pool.slice(0, 5), periods).eventWindow).toEqual({ from: -5, to: 12, reference: -1, bin: true })
    expect(buildRunSpec(study, 'event_study', { eventWindow: { from: -3, to: 3, reference: -1, bin: false } }, pool, periods).eventWindow).toEqual({ from: -3, to: 3, reference: -1, bin: false })
  })

  it('its: every intervention of the unit is a break, with monthly seasons; no comparison', () => {
    const spec = buildRunSpec(study, 'its', {}, pool, periods)
    expect(spec.its).toEqual({ seasonality: 'month', breaks: ['2017-07', '2020-01'] })
    expect(spec.comparison).toBeUndefined()
  })

  it('options are passed on', () => {
    expect(buildRunSpec(study, 'did', { did: { form: '2x2' }, smallSample: 'full' }, pool, periods)).toMatchObject({ did: { form: '2x2' }, smallSample: 'full' })
  })

  it('several interventions against the comparison: did phases and a comparative its', () => {
    expect(laterInterventions(study)).toEqual([{ period: '2020-01', label: 'strengthened' }])
    const did = parseSpec(buildRunSpec(study, 'did', { interventions: 'each' }, pool, periods))
    expect(did.did).toEqual({ form: 'twfe', phases: ['2020-01'] })
    expect(parseSpec(buildRunSpec(study, 'did', {}, pool, periods)).did.phases).toBeUndefined()
    const its = parseSpec(buildRunSpec(study, 'its', { its: { comparison: 'mean' } }, pool, periods))
    expect(its.comparison).toEqual(pool)
    expect(its.its).toMatchObject({ comparison: 'mean', breaks: ['2017-07', '2020-01'] })
    expect(buildRunSpec(study, 'its', { interventions: 'first' }, pool, periods).its).toMatchObject({ breaks: ['2017-07'] })
    expect(runUsesPool('its', {})).toBe(false)
    expect(runUsesPool('synthetic', {})).toBe(true)
  })

  it('inference options and the seed are kept in the spec', () => {
    const spec = parseSpec(buildRunSpec(study, 'did', { inference: { method: 'permutation', seed: 7, draws: 999, level: 0.9 } }, pool, periods))
    expect(spec.inference).toEqual({ method: 'permutation', seed: 7, draws: 999, level: 0.9 })
    expect(parseSpec(buildRunSpec(study, 'did', {}, pool, periods)).inference).toEqual({ method: 'auto', level: 0.95, draws: 9999, seed: 1 })
  })

  it('staggered: the pool is the comparison; every period and no covariates', () => {
    const spec = parseSpec(buildRunSpec({ ...study, treated: ['A', 'B'], start: { A: '2017-07', B: '2019-01' }, window: { pre: ['2012-01', '2017-06'], post: ['2017-07', '2019-12'] } }, 'staggered', {}, pool, periods))
    expect(spec).toMatchObject({ design: 'staggered', comparison: pool, covariates: [], start: { A: '2017-07', B: '2019-01' } })
    expect(spec.window).toBeUndefined()
  })

  it('its as counts: the count as outcome, the denominator as exposure, no covariates', () => {
    const spec = parseSpec(buildRunSpec(study, 'its', { its: { family: 'quasipoisson', comparison: 'none' } }, pool, periods))
    expect(spec).toMatchObject({ outcome: 'count', transform: 'level', covariates: [], its: { family: 'quasipoisson', exposure: 'exposure', comparison: 'none' } })
    expect(isCountModel('its', { its: { family: 'poisson' } } as never)).toBe(true)
    expect(isCountModel('did', {})).toBe(false)
  })
})

describe('startsOf', () => {
  it('reads a year start that jsonb returns as a number, and per-unit starts', async () => {
    const { startsOf } = await import('../../../../server/services/studies/spec')
    expect(startsOf({ treated: ['A', 'B'], start: 2007 as unknown as string })).toEqual({ A: '2007', B: '2007' })
    expect(startsOf({ treated: ['A'], start: '2017-07' })).toEqual({ A: '2017-07' })
    expect(startsOf({ treated: ['A', 'B'], start: { A: '2007', B: 2009 as unknown as string } })).toEqual({ A: '2007', B: '2009' })
  })
  it('an event study on a year start gets its window from the start (no error)', () => {
    const years = Array.from({ length: 12 }, (_, i) => String(2001 + i))
    const spec = buildRunSpec({ ...study, start: 2007 as unknown as string, interventions: [] }, 'event_study', {}, pool, years)
    expect(spec.eventWindow).toMatchObject({ from: -5, reference: -1 })
  })
})
