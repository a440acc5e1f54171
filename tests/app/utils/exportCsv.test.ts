/** CSV export of results tables: quoting, numbers, and formula-like text kept as text. */
import { describe, expect, it } from 'vitest'
import { csvField, toCsv } from '../../../app/utils/exportCsv'

describe('toCsv', () => {
  it('writes a header and rows, quoting where needed', () => {
    const rows = [{ term: 'treatment', estimate: -2.5, note: 'a, "b"' }, { term: 'income', estimate: 0.125, note: null }]
    expect(toCsv([{ key: 'term', header: 'Term' }, { key: 'estimate', header: 'Estimate' }, { key: 'note', header: 'Note' }], rows))
      .toBe('Term,Estimate,Note\r\ntreatment,-2.5,"a, ""b"""\r\nincome,0.125,\r\n')
  })

  it('keeps formula-like text as text and numbers as numbers', () => {
    expect(csvField('=SUM(A1:A9)')).toBe('\'=SUM(A1:A9)')
    expect(csvField('+1')).toBe('\'+1')
    expect(csvField('@cmd')).toBe('\'@cmd')
    expect(csvField(-3)).toBe('-3')
    expect(csvField(Number.NaN)).toBe('')
    expect(csvField('plain')).toBe('plain')
  })

  it('uses a value function when given', () => {
    expect(toCsv([{ key: 'p', header: 'p', value: r => r.p.toFixed(2) }], [{ p: 0.123 }])).toBe('p\r\n0.12\r\n')
  })
})
