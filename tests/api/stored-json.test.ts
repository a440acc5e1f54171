/**
 * asStoredJson (server/services/studies/storedJson.ts) against PostgreSQL itself: a value put
 * through a jsonb column and read back must equal asStoredJson of the value, key order
 * included (a run's reply is built that way instead of reading the run back).
 */
import { afterAll, describe, expect, it } from 'vitest'
import { closePool, sql } from '../support/db'
import { asStoredJson } from '../../server/services/studies/storedJson'
import { compareRuns } from '../../server/services/studies/compareRuns'

afterAll(closePool)

const samples: unknown[] = [
  // keys of several lengths, out of order, nested; the shape of an event study's coefficients
  { rel_3: 1, 'rel_-3': -0.5, rel_0: 0, rel_10: 2, 'rel_-12': 3, a: { zz: 1, b: [{ yy: null, x: 1.5e-12 }] } },
  // undefined members, non-finite numbers, array holes, dates, empty objects and arrays
  { keep: 'text', gone: undefined, nan: Number.NaN, inf: Number.POSITIVE_INFINITY, list: [1, undefined, 3], at: new Date('2026-12-02T10:00:00.000Z'), empty: {}, none: [] },
  // non-ASCII keys (byte order) and numbers that must come back exactly
  { 'é': 1, 'z': 2, 'ab': 3, 'Ω': 4, 'aé': 5, tiny: 5e-324, big: 1.7976931348623157e308, third: 1 / 3, neg: -0.1 },
  [{ b: 1, a: 2 }, 'x', true, false, null],
]

describe('asStoredJson', () => {
  it.each(samples.map((s, i) => [i, s]))('sample %i reads back from jsonb exactly as asStoredJson gives it', async (_, sample) => {
    const [row] = await sql<{ v: unknown }>('SELECT $1::jsonb AS v', [JSON.stringify(sample)])
    const mine = asStoredJson(sample)
    expect(JSON.stringify(mine)).toBe(JSON.stringify(row!.v))
  })

  it('compareRuns sees the same spec whatever the order of its keys', () => {
    const run = { id: 2, fingerprint: 'f', releaseIds: [1], result: { effect: { estimate: 1, se: 0.5 } }, spec: { design: 'did', comparison: ['A', 'B'], did: { window: null, phases: [] } } }
    const reordered = { ...run, id: 1, spec: { did: { phases: [], window: null }, comparison: ['A', 'B'], design: 'did' } }
    expect(compareRuns(run, reordered)).toMatchObject({ poolChanged: false, optionsChanged: [], dataChanged: false })
  })
})
