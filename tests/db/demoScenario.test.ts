/** The demo scenario is fixed by its seed and carries the effect written beside its generator. */
import { describe, expect, it } from 'vitest'
import {
  ADOPTED, demoCsv, demoJurisdictions, demoNeighbours, demoPolicyEvents, demoRows, FIRST_ADOPTER, LATER_ADOPTERS,
  RELATED_ADOPTER, SHOCK, STRENGTHENED, TRUE_EFFECT,
} from '~~/db/seed/demoScenario'

const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length

describe('demo scenario', () => {
  const rows = demoRows()

  it('has 60 municipalities in 6 regions, monthly 2012-01 to 2024-12, with neighbour links', () => {
    const units = demoJurisdictions()
    expect(units).toHaveLength(60)
    expect(new Set(units.map(u => u.region)).size).toBe(6)
    expect(new Set(units.map(u => u.name)).size).toBe(60)
    expect(rows).toHaveLength(60 * 156)
    expect(rows[0]!.period).toBe('2012-01')
    expect(rows.at(-1)!.period).toBe('2024-12')
    const links = demoNeighbours(units)
    expect(links.length).toBeGreaterThan(90)
    expect(links.some(([a, b]) => a === FIRST_ADOPTER || b === FIRST_ADOPTER)).toBe(true)
  })

  it('is the same on every run (fixed seed)', () => {
    expect(demoCsv()).toBe(demoCsv(demoRows()))
    expect(rows[1234]).toEqual(demoRows()[1234])
  })

  it('records one adoption and a strengthening, three later adoptions and a related policy', () => {
    const events = demoPolicyEvents()
    expect(events.filter(e => e.jurisdiction === FIRST_ADOPTER).map(e => [e.kind, e.period])).toEqual([['adoption', ADOPTED], ['strengthening', STRENGTHENED]])
    expect(new Set(LATER_ADOPTERS.map(a => a.period)).size).toBe(3)
    expect(events.filter(e => e.policy !== 'mediation_first').map(e => e.jurisdiction)).toEqual([RELATED_ADOPTER])
  })

  it('has seasonality: January above July on average', () => {
    expect(mean(rows.filter(r => r.period.endsWith('-01')).map(r => r.rate)) - mean(rows.filter(r => r.period.endsWith('-07')).map(r => r.rate))).toBeGreaterThan(0.5)
  })

  it('a plain 2x2 comparison on the published rates lands near TRUE_EFFECT.adoption', () => {
    const treated = new Set([FIRST_ADOPTER])
    const excluded = new Set([FIRST_ADOPTER, RELATED_ADOPTER, SHOCK.code, ...LATER_ADOPTERS.map(a => a.code)])
    const pre = (p: string) => p >= '2015-07' && p < ADOPTED
    const post = (p: string) => p >= ADOPTED && p < STRENGTHENED
    const cell = (inGroup: (c: string) => boolean, window: (p: string) => boolean) => mean(rows.filter(r => inGroup(r.code) && window(r.period)).map(r => r.rate))
    const did = (cell(c => treated.has(c), post) - cell(c => treated.has(c), pre)) - (cell(c => !excluded.has(c), post) - cell(c => !excluded.has(c), pre))
    expect(did).toBeGreaterThan(TRUE_EFFECT.adoption - 0.3)
    expect(did).toBeLessThan(TRUE_EFFECT.adoption + 0.3)
  })
})
