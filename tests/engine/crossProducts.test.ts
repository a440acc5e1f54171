// The blocked X'X pass (server/engine/ols.ts) against plain column dot products: equal up
// to rounding, by construction (the same sums in another order), for every column count
// (the four-at-a-time loop and its remainder) and row counts around the block size.
import { describe, expect, it } from 'vitest'
import { crossProducts, dot } from '../../server/engine/ols'

function columnsOf(n: number, k: number, seed: number): Float64Array[] {
  let a = seed
  const next = () => ((a = (a * 16807) % 2147483647) / 2147483647) - 0.5
  return Array.from({ length: k }, () => Float64Array.from({ length: n }, next))
}

describe('crossProducts', () => {
  for (const [n, k] of [[1, 1], [1023, 3], [1024, 4], [1025, 5], [5000, 9], [3001, 12]]) {
    it(`${n} rows x ${k} columns: X'X and X'y equal the dot products`, () => {
      const cols = columnsOf(n, k, 7 + n + k)
      const [y] = columnsOf(n, 1, 11 + n)
      const { xtx, xty } = crossProducts(cols, y)
      for (let a = 0; a < k; a++) {
        for (let b = 0; b < k; b++) expect(xtx[a * k + b]).toBeCloseTo(dot(cols[a], cols[b]), 10)
        expect(xtx[a * k + a]).toBeGreaterThan(0)
        expect(xty[a]).toBeCloseTo(dot(cols[a], y), 10)
      }
    })
  }
})
