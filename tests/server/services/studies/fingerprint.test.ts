/** fingerprintRows: order-free over rows and value keys, sensitive to every value, row and spec change. */
import { describe, expect, it } from 'vitest'
import { canonicalJson, fingerprintRows } from '../../../../server/services/studies/fingerprint'

const rows = [
  { jurisdiction: 'B', period: '2020-02', values: { outcome: 2, rent: null } },
  { jurisdiction: 'A', period: '2020-01', values: { outcome: 1.5, rent: 700 } },
  { jurisdiction: 'A', period: '2020-02', values: { rent: 710, outcome: 1.25 } },
]
const spec = { design: 'did', treated: ['A'], start: '2020-02' }

describe('fingerprintRows', () => {
  it('does not depend on row order or key order', () => {
    const shuffled = [rows[2]!, rows[0]!, rows[1]!].map(r => ({ ...r, values: Object.fromEntries(Object.entries(r.values).reverse()) }))
    expect(fingerprintRows(shuffled, { start: '2020-02', treated: ['A'], design: 'did' })).toBe(fingerprintRows(rows, spec))
    expect(fingerprintRows(rows, spec)).toMatch(/^[0-9a-f]{64}$/)
  })

  it('changes with any value, a missing value, a dropped row or the spec', () => {
    const base = fingerprintRows(rows, spec)
    const changed = rows.map((r, i) => (i === 1 ? { ...r, values: { ...r.values, outcome: 1.5000001 } } : r))
    expect(fingerprintRows(changed, spec)).not.toBe(base)
    const missing = rows.map((r, i) => (i === 1 ? { ...r, values: { ...r.values, rent: null } } : r))
    expect(fingerprintRows(missing, spec)).not.toBe(base)
    expect(fingerprintRows(rows.slice(1), spec)).not.toBe(base)
    expect(fingerprintRows(rows, { ...spec, start: '2020-01' })).not.toBe(base)
  })

  it('canonicalJson sorts keys at every depth and keeps array order', () => {
    expect(canonicalJson({ b: [2, 1], a: { d: 1, c: null } })).toBe('{"a":{"c":null,"d":1},"b":[2,1]}')
  })
})
