/** check() refuses NUL characters anywhere, and the shared id schema refuses ids outside 32 bits (cases invented). */
import { describe, expect, it } from 'vitest'
import { findNul } from '../../../server/utils/validate'
import { idParams, MAX_ID } from '../../../shared/schemas/ids'

describe('findNul', () => {
  it('finds a NUL in a value or a key at any depth, and nothing in clean input', () => {
    expect(findNul({ a: 'fine', b: [1, { c: 'x\u0000y' }] })).toEqual(['b', '1', 'c'])
    expect(findNul({ ['k\u0000']: 1 })).toEqual(['k\\0'])
    expect(findNul('\u0000')).toEqual([])
    expect(findNul({ a: 'fine', n: 3, t: true, z: null })).toBeNull()
    let deep: unknown = 'x\u0000'
    for (let i = 0; i < 2000; i++) deep = [deep]
    expect(findNul(deep)).toHaveLength(2000)
  })
})

describe('idParams', () => {
  const schema = idParams('study id')
  it('takes 1 to 2^31 - 1, as text or number', () => {
    expect(schema.parse({ id: '1' })).toEqual({ id: 1 })
    expect(schema.parse({ id: String(MAX_ID) })).toEqual({ id: 2147483647 })
  })
  it('refuses 2^31 and above, fractions, zero, negatives and text', () => {
    for (const id of ['2147483648', '1e12', '1.5', '0', '-3', 'abc', '']) {
      const r = schema.safeParse({ id })
      expect(r.success, id).toBe(false)
    }
  })
})
