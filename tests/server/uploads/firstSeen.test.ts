/**
 * FirstSeen (the duplicate-cell table of the upload check) against JavaScript's own Map on
 * the same sequence of keys: every answer equal, through growth, with keys up to 2^53 and
 * with clusters of neighbouring keys (cells of one jurisdiction).
 */
import { describe, expect, it } from 'vitest'
import { FirstSeen } from '../../../server/services/uploads/validate/cells'
import { uniforms } from '../../../bench/uniforms'

function check(keys: number[]) {
  const mine = new FirstSeen(4)
  const reference = new Map<number, number>()
  keys.forEach((key, row) => {
    const expected = reference.get(key)
    if (expected === undefined) reference.set(key, row)
    expect(mine.firstRow(key, row)).toBe(expected)
  })
  expect(mine.size).toBe(reference.size)
}

describe('FirstSeen', () => {
  it('answers as a Map does for random keys with repeats, across many growths', () => {
    const r = uniforms(11)
    check(Array.from({ length: 50_000 }, () => Math.floor(r() * 20_000)))
  })

  it('keeps large keys apart (jurisdiction id x 2^22 + period slot, up to 2^53)', () => {
    const r = uniforms(12)
    const keys = Array.from({ length: 20_000 }, () => Math.floor(r() * 2 ** 31) * 2 ** 22 + Math.floor(r() * 300))
    check([...keys, ...keys.slice(0, 5_000), 2 ** 53 - 1, 0, 2 ** 53 - 1, 0])
  })

  it('handles runs of neighbouring keys (the cells of one jurisdiction) and keys that differ only in the high word', () => {
    const keys: number[] = []
    for (let j = 1; j <= 200; j++) for (let p = 0; p < 120; p++) keys.push(j * 2 ** 22 + p)
    for (let j = 1; j <= 2000; j++) keys.push(j * 2 ** 32)
    check([...keys, ...keys.filter((_, i) => i % 7 === 0)])
  })
})
