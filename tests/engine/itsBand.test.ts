// The counterfactual band of design "its" (designs/its.ts, fittedSeries): the pointwise
// interval x'b -/+ c sqrt(x'Vx) of the pre-period trend projected past the break.
//
// The expected values are computed here by hand, by construction, on a small invented series:
// OLS on [1, time, level, slope] written out with ml-matrix (a general-purpose matrix library),
// V = (X'X)^-1 X' diag(e^2) X (X'X)^-1, the Newey-West covariance at lag 0 (no N/(N-K) factor,
// as the engine's doc comment states), c = Student t quantile on N - K df at the level asked.
// Count models: the band is exp of the linear bounds, so it is symmetric on the log scale.
import { Matrix, inverse } from 'ml-matrix'
import { describe, expect, it } from 'vitest'
import { tQuantileAt } from '../../server/engine/distributions'
import { estimate } from '../../server/engine/estimate'
import type { TypedRow } from '../../server/engine/panel'

// invented: 12 years, break in 2007 (7th period)
const ys = [3.1, 3.9, 5.2, 5.8, 7.1, 7.7, 11.2, 11.9, 13.4, 13.8, 15.3, 16.2]
const rows: TypedRow[] = ys.map((y, i) => ({ unit: 'A', period: String(2001 + i), values: { y, n: 20 + i } }))
const breakAt = 6

function byHand(level: number) {
  const n = ys.length
  const X = new Matrix(n, 4)
  ys.forEach((_, i) => {
    X.set(i, 0, 1)
    X.set(i, 1, i + 1)
    X.set(i, 2, i >= breakAt ? 1 : 0)
    X.set(i, 3, i >= breakAt ? i - breakAt : 0)
  })
  const y = Matrix.columnVector(ys)
  const bread = inverse(X.transpose().mmul(X))
  const b = bread.mmul(X.transpose()).mmul(y)
  const e = y.clone().sub(X.mmul(b))
  const meat = new Matrix(4, 4)
  for (let i = 0; i < n; i++) {
    const xi = X.getRowVector(i)
    meat.add(xi.transpose().mmul(xi).mul(e.get(i, 0) ** 2))
  }
  const V = bread.mmul(meat).mmul(bread)
  const c = tQuantileAt(0.5 + level / 2, n - 4)
  return ys.map((_, i) => {
    const x = Matrix.rowVector([1, i + 1, 0, 0])
    const cf = x.mmul(b).get(0, 0)
    const half = c * Math.sqrt(x.mmul(V).mmul(x.transpose()).get(0, 0))
    return { cf, low: cf - half, high: cf + half }
  })
}

describe('counterfactual band (by construction)', () => {
  for (const level of [0.95, 0.9]) {
    it(`equals x'b -/+ t sqrt(x'Vx) with the Newey-West covariance at lag 0, level ${level}`, () => {
      const r = estimate({ rows }, { design: 'its', outcome: 'y', start: '2007', its: { hacLag: 0 }, inference: { method: 'analytic', level } })
      const hand = byHand(level)
      expect(r.itsSeries).toHaveLength(ys.length)
      r.itsSeries!.forEach((p, i) => {
        expect(p.counterfactual).toBeCloseTo(hand[i].cf, 10)
        expect(p.counterfactualLow).toBeCloseTo(hand[i].low, 10)
        expect(p.counterfactualHigh).toBeCloseTo(hand[i].high, 10)
      })
      // projected far past the break, the band widens
      const last = r.itsSeries!.at(-1)!
      const mid = r.itsSeries![3]
      expect(last.counterfactualHigh! - last.counterfactualLow!).toBeGreaterThan(mid.counterfactualHigh! - mid.counterfactualLow!)
    })
  }

  it('AR(1) errors give a band around the counterfactual', () => {
    const r = estimate({ rows }, { design: 'its', outcome: 'y', start: '2007', its: { errors: 'prais_winsten' }, inference: { method: 'analytic' } })
    for (const p of r.itsSeries!) {
      expect(p.counterfactualLow!).toBeLessThan(p.counterfactual)
      expect(p.counterfactualHigh!).toBeGreaterThan(p.counterfactual)
    }
  })

  it('count models: exp of the linear bounds, symmetric on the log scale around the counterfactual', () => {
    const counts: TypedRow[] = ys.map((y, i) => ({ unit: 'A', period: String(2001 + i), values: { c: Math.round(y * 10), n: 20 + i } }))
    for (const family of ['poisson', 'quasipoisson'] as const) {
      const r = estimate({ rows: counts }, { design: 'its', outcome: 'c', start: '2007', its: { family, exposure: 'n' }, inference: { method: 'analytic' } })
      for (const p of r.itsSeries!) {
        expect(p.counterfactualLow!).toBeGreaterThan(0)
        expect(p.counterfactualLow!).toBeLessThan(p.counterfactual)
        expect(Math.log(p.counterfactualHigh!) - Math.log(p.counterfactual)).toBeCloseTo(Math.log(p.counterfactual) - Math.log(p.counterfactualLow!), 10)
      }
    }
  })
})

describe('count models carry the exposure per period (for rates on the reader\'s scale)', () => {
  it('exposure beside each point; none without it', () => {
    const counts: TypedRow[] = ys.map((y, i) => ({ unit: 'A', period: String(2001 + i), values: { c: Math.round(y * 10), n: 20 + i } }))
    const r = estimate({ rows: counts }, { design: 'its', outcome: 'c', start: '2007', its: { family: 'poisson', exposure: 'n' }, inference: { method: 'analytic' } })
    expect(r.itsSeries!.map(p => p.exposure)).toEqual(ys.map((_, i) => 20 + i))
    const g = estimate({ rows }, { design: 'its', outcome: 'y', start: '2007', its: { hacLag: 0 }, inference: { method: 'analytic' } })
    expect(g.itsSeries![0]!.exposure).toBeUndefined()
  })
})
