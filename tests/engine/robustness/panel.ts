// A small invented panel whose answers are known by construction (no outside source):
// treated A and donors B, C, D over the years 2001-2010, treatment from 2008. In the
// pre-period B and C stay at 10 and D at 8; A is 10 except a bump to 13 in 2005. After the
// start A is 15, B 10, C 12, D 8. On a balanced panel with one start and no covariates the
// two-way fixed-effects estimate is (post mean - pre mean) of A minus the same averaged over
// the donors, which the tests compute by hand.
import type { TypedRow } from '../../../server/engine/panel'

const years = Array.from({ length: 10 }, (_, i) => 2001 + i)
const series: Record<string, number[]> = {
  A: [10, 10, 10, 10, 13, 10, 10, 15, 15, 15],
  B: [10, 10, 10, 10, 10, 10, 10, 10, 10, 10],
  C: [10, 10, 10, 10, 10, 10, 10, 12, 12, 12],
  D: [8, 8, 8, 8, 8, 8, 8, 8, 8, 8],
}

export const rows: TypedRow[] = Object.entries(series).flatMap(([unit, ys]) => ys.map((y, i) => ({ unit, period: years[i], values: { outcome: y } })))
export const spec = { design: 'did', treated: ['A'], start: 2008 } as const

/** A = 32/7 from 10 3/7 to 15; donors move 0, 2 and 0, so the full estimate is 32/7 - 2/3 = 82/21. */
export const FULL = 82 / 21
