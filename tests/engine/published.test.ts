// Published worked examples, with the values RECALLED FROM MEMORY (not re-read from the
// publications); the reference panels and general-purpose software behind the exact checks
// are in reference.test.ts.
import { describe, expect, it } from 'vitest'
import { estimate } from '../../server/engine/index'
import type { TypedRow } from '../../server/engine/panel'
import { loadCase } from './helpers'

describe('Card and Krueger (1994, American Economic Review), minimum wage, 2x2', () => {
  // Recalled from memory: mean full-time-equivalent employment per store, New Jersey 20.44
  // before and 21.03 after the April 1992 increase, Pennsylvania 23.33 before and 21.17
  // after; the published difference-in-differences is about 2.76 (these rounded means give
  // 2.75). The stores below are made up so that the cell means equal those figures.
  const rows: TypedRow[] = []
  const add = (store: string, before: number, after: number) => {
    rows.push({ unit: store, period: 1, values: { fte: before } }, { unit: store, period: 2, values: { fte: after } })
  }
  add('nj1', 19.44, 22.03)
  add('nj2', 21.44, 20.03)
  add('nj3', 20.44, 21.03)
  add('pa1', 24.33, 20.17)
  add('pa2', 22.33, 22.17)

  it('the 2x2 design reproduces the cell means and their difference', () => {
    const r = estimate({ rows }, { design: 'did', did: { form: '2x2' }, outcome: 'fte', treated: ['nj1', 'nj2', 'nj3'], start: 2 })
    const g = r.groupMeans!
    expect(g.treatedPre).toBeCloseTo(20.44, 10)
    expect(g.treatedPost).toBeCloseTo(21.03, 10)
    expect(g.controlPre).toBeCloseTo(23.33, 10)
    expect(g.controlPost).toBeCloseTo(21.17, 10)
    expect(g.did).toBeCloseTo(2.75, 10)
    expect(r.effect.estimate).toBeCloseTo(2.75, 10)
    expect(Math.abs(g.did - 2.76)).toBeLessThan(0.02)
    // 3 treated and 2 comparison stores: too few for placebo sets of 3, so the wild bootstrap, with its own caution
    expect(r.inference!.method).toBe('wild_bootstrap')
    expect(r.warnings.join(' ')).toMatch(/only 5 clusters: even the wild cluster bootstrap is unreliable/)
  })
})

describe('Stock and Watson, Introduction to Econometrics, fixed-effects chapter: beer tax and traffic deaths', () => {
  // Recalled from memory: the coefficient on the real beer tax is -0.66 (SE 0.29) with state
  // fixed effects and -0.64 (SE 0.36) with state and year fixed effects, SEs clustered by
  // state. With the default smallSample "nested" the Fatalities reference panels give the
  // same figures at two decimals.
  it('state effects: -0.66 (0.29)', () => {
    const { panel } = loadCase('a1_fatalities_statefe_beertax')
    const r = estimate(panel, { design: 'did', treatmentColumn: 'beertax', fixedEffects: 'unit' })
    expect(r.smallSample).toBe('nested')
    expect(r.effect.estimate.toFixed(2)).toBe('-0.66')
    expect(r.effect.se.toFixed(2)).toBe('0.29')
  })
  it('state and year effects: -0.64 (0.36)', () => {
    const { panel } = loadCase('a1_fatalities_twfe_beertax')
    const r = estimate(panel, { design: 'did', treatmentColumn: 'beertax' })
    expect(r.effect.estimate.toFixed(2)).toBe('-0.64')
    expect(r.effect.se.toFixed(2)).toBe('0.36')
    // every other variant misses the textbook's 0.36
    for (const v of ['full', 'slopes', 'clusters', 'none']) {
      expect(estimate(panel, { design: 'did', treatmentColumn: 'beertax', smallSample: v }).effect.se.toFixed(2)).not.toBe('0.36')
    }
  })
})
