/**
 * The engine thread's tasks (server/services/engineThread/tasks.ts) give exactly what the
 * engine gives when called directly on the same rows: rows survive packing (packedRows.ts)
 * unchanged, including nulls and absent keys, and a "run" task returns the parsed spec, the
 * estimate and the fingerprint the web process computed before. The panel is a small
 * invented one (treated unit drops by 2 after the start), so the answer is known by
 * construction.
 */
import { describe, expect, it } from 'vitest'
import { estimate, parseSpec, scoreDonors } from '../../../../server/engine'
import { packRows, rowBuffers, unpackRows } from '../../../../server/services/engineThread/packedRows'
import { runEngineTask } from '../../../../server/services/engineThread/tasks'
import { fingerprintRows, type StudyRow } from '../../../../server/services/studies/fingerprint'

const periods = Array.from({ length: 12 }, (_, i) => `2020-${String(i + 1).padStart(2, '0')}`)
const units = ['T', 'A', 'B', 'C', 'D']
const rows: StudyRow[] = units.flatMap((u, k) => periods.map((p, t) => ({
  jurisdiction: u,
  period: p,
  values: { outcome: 10 + k + 0.5 * t + ((t * 3 + k) % 4) * 0.1 - (u === 'T' && t >= 6 ? 2 : 0), ...(k === 2 && t === 1 ? { extra: null } : {}) },
})))
const spec = { design: 'did', unit: 'unit', period: 'period', outcome: 'outcome', treated: ['T'], comparison: ['A', 'B', 'C', 'D'], start: '2020-07' }
const engineRows = (rs: StudyRow[]) => rs.map(r => ({ unit: r.jurisdiction, period: r.period, values: r.values }))

describe('packed rows', () => {
  it('unpack to the rows packed, nulls and absent keys kept', () => {
    const odd: StudyRow[] = [
      { jurisdiction: 'X', period: '2020-01', values: { a: 1.5, b: null } },
      { jurisdiction: 'Y', period: '2020-01', values: { b: -0 } },
      { jurisdiction: 'X', period: '2020-02', values: { a: Number.MAX_VALUE, c: 1e-300 } },
    ]
    expect(unpackRows(packRows(odd))).toEqual(odd)
    expect(Object.is(unpackRows(packRows(odd))[1]!.values.b, -0)).toBe(true)
    expect(unpackRows(packRows(rows))).toEqual(rows)
    expect(rowBuffers(packRows(odd)).every(b => b instanceof ArrayBuffer)).toBe(true)
  })
})

describe('engine tasks', () => {
  it('estimate equals the engine called directly', () => {
    const direct = estimate({ rows: engineRows(rows) }, spec)
    expect(direct.effect.estimate).toBeCloseTo(-2, 1) // by construction
    expect(runEngineTask({ kind: 'estimate', rows: packRows(rows), spec })).toEqual(direct)
  })

  it('run returns the parsed spec, the same estimate and the same fingerprint', () => {
    const out = runEngineTask({ kind: 'run', rows: packRows(rows), spec }) as { spec: unknown, result: unknown, fingerprint: string }
    const parsed = parseSpec(spec)
    expect(out.spec).toEqual(parsed)
    expect(out.result).toEqual(estimate({ rows: engineRows(rows) }, parsed))
    expect(out.fingerprint).toBe(fingerprintRows(rows, parsed))
  })

  it('scoreDonors equals the engine called directly; a refusal is the engine\'s error', () => {
    expect(runEngineTask({ kind: 'scoreDonors', rows: packRows(rows), spec })).toEqual(scoreDonors({ rows: engineRows(rows) }, spec))
    expect(() => runEngineTask({ kind: 'estimate', rows: packRows(rows), spec: { ...spec, start: '2019-01' } })).toThrow(/pre/i)
  })
})

describe('the run task\'s kept row hash', () => {
  it('gives the same fingerprint as hashing afresh, for every spec run on the same rows', () => {
    const key = JSON.stringify(['kept-hash test', [1, 2]])
    const other = { ...spec, comparison: ['A', 'B'] }
    for (const s of [spec, other, spec]) {
      const out = runEngineTask({ kind: 'run', rows: packRows(rows), spec: s, rowsKey: key }) as { fingerprint: string }
      expect(out.fingerprint).toBe(fingerprintRows(rows, parseSpec(s)))
    }
    expect(fingerprintRows(rows, parseSpec(other))).not.toBe(fingerprintRows(rows, parseSpec(spec)))
  })
})
