// Properties any fixed-effects estimator must have, checked on the synthetic reference panel
// (tests/fixtures/reference/a3_synthetic_twfe) and on an unbalanced version of it against a
// dense dummy-variable regression solved independently by QR (ml-matrix).
import { Matrix, QrDecomposition } from 'ml-matrix'
import { describe, expect, it } from 'vitest'
import { estimate } from '../../server/engine/index'
import type { CsvRecord } from '../../server/engine/panel'
import { loadCase } from './helpers'

const { panel, expected } = loadCase('a3_synthetic_twfe')
const records = (panel as { records: CsvRecord[] }).records
const spec = { design: 'did', treated: expected.treated_units as string[], start: 11 }
const base = estimate(panel, spec)

function withOutcome(f: (r: CsvRecord) => number): { records: CsvRecord[] } {
  return { records: records.map((r) => ({ ...r, outcome: String(f(r)) })) }
}

describe('invariances', () => {
  it('adding a constant to one unit leaves the fixed-effects estimate and SE unchanged', () => {
    const r = estimate(withOutcome((x) => Number(x.outcome) + (x.unit === 'u07' ? 1234.5 : 0)), spec)
    expect(r.effect.estimate).toBeCloseTo(base.effect.estimate, 9)
    expect(r.effect.se).toBeCloseTo(base.effect.se, 9)
  })
  it('adding a constant to one period leaves it unchanged too', () => {
    const r = estimate(withOutcome((x) => Number(x.outcome) + (x.period === '4' ? -77 : 0)), spec)
    expect(r.effect.estimate).toBeCloseTo(base.effect.estimate, 9)
    expect(r.effect.se).toBeCloseTo(base.effect.se, 9)
  })
  it('scaling the outcome scales the estimate and SE', () => {
    const r = estimate(withOutcome((x) => Number(x.outcome) * 3.5), spec)
    expect(r.effect.estimate / base.effect.estimate).toBeCloseTo(3.5, 10)
    expect(r.effect.se / base.effect.se).toBeCloseTo(3.5, 10)
    expect(r.effect.p).toBeCloseTo(base.effect.p, 10)
  })
  it('reordering rows changes nothing', () => {
    const shuffled = [...records].reverse()
    for (let i = 0; i < shuffled.length; i += 7) [shuffled[i], shuffled[(i * 13) % shuffled.length]] = [shuffled[(i * 13) % shuffled.length], shuffled[i]]
    for (const s of [spec, { ...spec, design: 'event_study', eventWindow: { from: -4, to: 4 } }, { ...spec, did: { form: '2x2' } }]) {
      expect(estimate({ records: shuffled }, s)).toEqual(estimate(panel, s))
    }
  }, 60_000)
})

describe('unbalanced panels', () => {
  // drop about 12% of the rows, by a fixed rule
  const kept = records.filter((_, i) => (i * 7919) % 100 >= 12)
  const units = [...new Set(kept.map((r) => String(r.unit)))].sort()
  const periods = [...new Set(kept.map((r) => Number(r.period)))].sort((a, b) => a - b)

  it('the within transformation matches the dummy-variable regression solved by QR', () => {
    const treated = new Set(spec.treated)
    const X = new Matrix(kept.length, 1 + 1 + (units.length - 1) + (periods.length - 1))
    const y = new Matrix(kept.length, 1)
    kept.forEach((r, i) => {
      const d = treated.has(String(r.unit)) && Number(r.period) >= 11 ? 1 : 0
      X.set(i, 0, d)
      X.set(i, 1, 1)
      const u = units.indexOf(String(r.unit))
      if (u > 0) X.set(i, 1 + u, 1)
      const p = periods.indexOf(Number(r.period))
      if (p > 0) X.set(i, units.length + p, 1)
      y.set(i, 0, Number(r.outcome))
    })
    const beta = new QrDecomposition(X).solve(y)
    const resid = y.clone().sub(X.mmul(beta))
    // CR1 with K = every coefficient: G/(G-1) (N-1)/(N-K) (X'X)^-1 sum_g (X_g'u_g)(X_g'u_g)' (X'X)^-1
    const bread = new QrDecomposition(X.transpose().mmul(X)).solve(Matrix.eye(X.columns))
    const meat = new Matrix(X.columns, X.columns)
    for (const u of units) {
      const s = new Matrix(1, X.columns)
      kept.forEach((r, i) => {
        if (String(r.unit) === u) for (let j = 0; j < X.columns; j++) s.set(0, j, s.get(0, j) + X.get(i, j) * resid.get(i, 0))
      })
      meat.add(s.transpose().mmul(s))
    }
    const N = kept.length
    const G = units.length
    const K = X.columns
    const V = bread.mmul(meat).mmul(bread).mul(((G / (G - 1)) * (N - 1)) / (N - K))

    const r = estimate({ records: kept }, { ...spec, smallSample: 'full' })
    expect(r.nObs).toBe(N)
    expect(r.fit.kFull).toBe(K)
    expect(Math.abs(r.effect.estimate - beta.get(0, 0))).toBeLessThan(1e-9 * Math.abs(beta.get(0, 0)))
    expect(Math.abs(r.effect.se - Math.sqrt(V.get(0, 0)))).toBeLessThan(1e-8 * Math.sqrt(V.get(0, 0)))
    expect(r.warnings.join(' ')).not.toMatch(/tolerance/)
  })
})
