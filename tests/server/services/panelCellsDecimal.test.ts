// The reader of doubles in PostgreSQL's COPY text (server/services/panelCells.ts) gives
// exactly Number() of the same text, by construction: shortest round-trip forms of random
// doubles of every magnitude (as float8 output writes them), and the special forms.
import { describe, expect, it } from 'vitest'
import { decimal } from '../../../server/services/panelCells'

describe('decimal (COPY text doubles)', () => {
  it('equals Number() on 20,000 shortest forms and the special values', () => {
    let a = 12345
    const next = () => ((a = (a * 16807) % 2147483647) / 2147483647)
    const texts = ['0', '-0', '1', '-1', '35.3', '0.1', '1e+20', '-1.5e-05', 'NaN', 'Infinity', '-Infinity', '123456789012345', '1234567890123456', '0.000001', '100', '99.99']
    for (let i = 0; i < 20_000; i++) {
      const v = (next() - 0.5) * 10 ** Math.floor(next() * 30 - 12)
      texts.push(String(i % 3 ? Math.round(v * 1000) / 1000 : v))
    }
    for (const t of texts) {
      const line = `x\t${t}\ty`
      expect(Object.is(decimal(line, 2, 2 + t.length), Number(t)), t).toBe(true)
    }
  })
})
