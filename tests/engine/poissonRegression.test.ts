// Poisson regression with an offset (poissonRegression.ts) against c7_seatbelts_its_poisson,
// source (its README line): R 4.2.2 datasets::Seatbelts (UK road casualties, monthly Jan 1969 -
// Dec 1984, N=192); outcome = DriversKilled; exposure = kms; law = 1 from Feb 1983 (period 170);
// R 4.2.2 glm(outcome ~ time + law + time_since_law + factor(month), offset = log(exposure),
// family = poisson) and family = quasipoisson, glm.control(epsilon = 1e-14).
// Refusals and separation on small invented series.
import { describe, expect, it } from 'vitest'
import { pTwoSidedNormal, pTwoSidedT, tQuantileAt } from '../../server/engine/distributions'
import { EngineError } from '../../server/engine/errors'
import { Z975, exposureOffset, fitPoisson, rateRatio, rateRatios, separationDirection } from '../../server/engine/poissonRegression'
import { loadCase, nearP, fails } from './helpers'

/** |got - exp| <= rel |exp| (+ a tiny absolute floor for values at 0). */
function rel(got: number, exp: number, tol: number, label: string): void {
  expect(Math.abs(got - exp), `${label}: got ${got}, expected ${exp}`).toBeLessThanOrEqual(tol * Math.abs(exp) + 1e-300)
}


const ones = (n: number) => new Float64Array(n).fill(1)

/** The c7 design: intercept, time, law, time_since_law, month_2..month_12 (January the reference). */
function c7Design() {
  const c = loadCase('c7_seatbelts_its_poisson')
  if (!('records' in c.panel)) throw new Error('records expected')
  const recs = c.panel.records
  const col = (name: string) => Float64Array.from(recs, (r) => Number(r[name]))
  const n = recs.length
  const month = col('month')
  const columns = [ones(n), col('time'), col('law'), col('time_since_law')]
  const names = ['intercept', 'time', 'law', 'time_since_law']
  for (let m = 2; m <= 12; m++) {
    columns.push(month.map((v) => (v === m ? 1 : 0)))
    names.push(`month_${m}`)
  }
  return { ...c, y: col('outcome'), exposure: col('exposure'), columns, names, n }
}

describe('c7_seatbelts_its_poisson (source: R 4.2.2 glm poisson and quasipoisson with offset log(kms), epsilon 1e-14)', () => {
  const d = c7Design()
  const e = d.expected
  const tol = 1e-8 // expected.json: relative 1e-8 on coefficients, SEs, rate ratios, dispersion, deviance

  it('names its source', () => {
    expect(d.source).toMatch(/R 4\.2\.2 glm\(outcome ~ time \+ law \+ time_since_law \+ factor\(month\), offset = log\(exposure\), family = poisson\)/)
    expect(d.n).toBe(e.n_obs)
  })

  for (const [label, options] of [
    ['epsilon 1e-14 as the reference', { tol: 1e-14 }],
    ['default tolerance', {}],
  ] as const) {
    it(`coefficients, SEs, quasi SEs, rate ratios, fit (${label})`, () => {
      const f = fitPoisson(d.y, d.columns, d.names, exposureOffset(d.exposure), options)
      expect(f.names.length).toBe(e.fit.k)
      expect(f.dfResidual).toBe(e.fit.df_residual)
      expect(f.nObs).toBe(e.n_obs)
      expect(f.iterations).toBe(e.fit.iterations)
      rel(f.deviance, e.fit.deviance, tol, 'deviance')
      rel(f.pearsonChi2, e.fit.pearson_chi2, tol, 'pearson chi2')
      rel(f.dispersion, e.fit.dispersion_pearson, tol, 'dispersion')
      rel(f.nullDeviance, e.fit.null_deviance, tol, 'null deviance')
      rel(f.logLik, e.fit.loglik, tol, 'loglik')
      rel(2 * f.names.length - 2 * f.logLik, e.fit.aic, tol, 'aic')
      const rr = rateRatios(f)
      const rrQuasi = rateRatios(f, { quasi: true })
      const tCrit = tQuantileAt(0.975, f.dfResidual)
      const rrQuasiT = rateRatios(f, { quasi: true, critical: tCrit })
      f.names.forEach((name, j) => {
        const x = e.coefficients[name]
        expect(x, name).toBeDefined()
        rel(f.beta[j], x.estimate, tol, `${name} estimate`)
        rel(f.se[j], x.se, tol, `${name} se`)
        rel(f.seQuasi[j], x.se_quasi, tol, `${name} se_quasi`)
        rel(f.beta[j] / f.se[j], x.z, tol, `${name} z`)
        rel(f.beta[j] / f.seQuasi[j], x.t_quasi, tol, `${name} t_quasi`)
        nearP(pTwoSidedNormal(f.beta[j] / f.se[j]), x.p, `${name} p`)
        nearP(pTwoSidedT(f.beta[j] / f.seQuasi[j], f.dfResidual), x.p_quasi, `${name} p_quasi`)
        rel(rr[name].rateRatio, x.rate_ratio, tol, `${name} rate ratio`)
        rel(rr[name].low, x.ci95_rr[0], tol, `${name} ci95_rr low`)
        rel(rr[name].high, x.ci95_rr[1], tol, `${name} ci95_rr high`)
        rel(rrQuasi[name].low, x.ci95_rr_quasi[0], tol, `${name} ci95_rr_quasi low`)
        rel(rrQuasi[name].high, x.ci95_rr_quasi[1], tol, `${name} ci95_rr_quasi high`)
        rel(rrQuasiT[name].low, x.ci95_rr_quasi_t[0], tol, `${name} ci95_rr_quasi_t low`)
        rel(rrQuasiT[name].high, x.ci95_rr_quasi_t[1], tol, `${name} ci95_rr_quasi_t high`)
      })
    })
  }

  it('solves the score equations X\'(y - mu) = 0 and gives mu = exposure exp(x\'b)', () => {
    const f = fitPoisson(d.y, d.columns, d.names, exposureOffset(d.exposure))
    d.columns.forEach((c, j) => {
      let s = 0
      let scale = 0
      for (let i = 0; i < d.n; i++) {
        s += c[i] * (d.y[i] - f.mu[i])
        scale += Math.abs(c[i] * d.y[i])
      }
      expect(Math.abs(s), d.names[j]).toBeLessThan(1e-10 * scale)
    })
    for (let i = 0; i < d.n; i++) {
      let eta = 0
      d.columns.forEach((c, j) => (eta += c[i] * f.beta[j]))
      rel(f.mu[i], d.exposure[i] * Math.exp(eta), 1e-12, `mu row ${i + 1}`)
    }
  })

  it('rescaling the exposure moves only the intercept (by minus the log of the factor)', () => {
    const base = fitPoisson(d.y, d.columns, d.names, exposureOffset(d.exposure))
    const scaled = fitPoisson(d.y, d.columns, d.names, exposureOffset(d.exposure.map((v) => v * 1000)))
    rel(scaled.beta[0], base.beta[0] - Math.log(1000), 1e-10, 'intercept')
    for (let j = 1; j < d.names.length; j++) {
      expect(Math.abs(scaled.beta[j] - base.beta[j]), d.names[j]).toBeLessThan(1e-10 * (Math.abs(base.beta[j]) + base.se[j]))
      rel(scaled.se[j], base.se[j], 1e-9, `${d.names[j]} se`)
    }
    rel(scaled.deviance, base.deviance, 1e-10, 'deviance')
  })

  it('stops with not_converged when the step budget is too small', () => {
    fails(() => fitPoisson(d.y, d.columns, d.names, exposureOffset(d.exposure), { maxIter: 2 }), 'not_converged', /Poisson regression did not converge in 2 steps/)
  })

  it('times one fit (N = 192, K = 15)', () => {
    const offset = exposureOffset(d.exposure)
    fitPoisson(d.y, d.columns, d.names, offset)
    const t0 = performance.now()
    for (let r = 0; r < 10; r++) fitPoisson(d.y, d.columns, d.names, offset)
    const ms = (performance.now() - t0) / 10
    expect(ms).toBeLessThan(200)
  })
})

describe('rate ratio helper', () => {
  it('exp(b) with Wald bounds exp(b -/+ 1.959963985 se)', () => {
    expect(Z975).toBeCloseTo(1.959963985, 9)
    const r = rateRatio(Math.log(2), 0.1)
    expect(r.rateRatio).toBeCloseTo(2, 14)
    expect(r.low).toBeCloseTo(2 * Math.exp(-0.1959963984540054), 14)
    expect(r.high).toBeCloseTo(2 * Math.exp(0.1959963984540054), 14)
  })
})

describe('refusals on invented series', () => {
  const n = 8
  const time = Float64Array.from({ length: n }, (_, i) => i + 1)
  const cols = [ones(n), time]
  const names = ['intercept', 'time']
  const y = Float64Array.from([3, 5, 2, 6, 4, 7, 5, 8])

  it('negative, fractional and missing counts, naming the first row', () => {
    fails(() => fitPoisson(Float64Array.from([3, -1, 2, -4, 4, 7, 5, 8]), cols, names), 'invalid_input', /the count is negative \(-1\) in row 2: a Poisson model needs counts 0, 1, 2/)
    fails(() => fitPoisson(Float64Array.from([3, 5, 2.5, 6, 4.2, 7, 5, 8]), cols, names), 'invalid_input', /the count is not a whole number \(2\.5\) in row 3/)
    fails(() => fitPoisson(Float64Array.from([3, 5, 2, 6, NaN, 7, 5, 8]), cols, names, undefined, { rowLabels: ['2001', '2002', '2003', '2004', '2005', '2006', '2007', '2008'] }), 'invalid_input', /the count is missing in row 5 \(2005\)/)
  })

  it('zero, negative and missing exposure', () => {
    fails(() => exposureOffset(Float64Array.from([10, 0, 12, 11, -3, 10, 10, 10])), 'non_positive_log', /exposure is 0 in row 2: the exposure must be positive/)
    fails(() => exposureOffset(Float64Array.from([10, 9, 12, 11, -3, 10, 10, 10]), 'population'), 'non_positive_log', /population is -3 in row 5/)
    fails(() => exposureOffset(Float64Array.from([10, 9, NaN, 11, 3, 10, 10, 10])), 'invalid_input', /exposure is missing in row 3/)
    const offset = Float64Array.from([10, 0, 12, 11, 3, 10, 10, 10], Math.log)
    fails(() => fitPoisson(y, cols, names, offset), 'non_positive_log', /the offset is -Infinity in row 2 \(the exposure is 0\)/)
    offset[1] = Math.log(-2)
    fails(() => fitPoisson(y, cols, names, offset), 'non_positive_log', /the offset is NaN in row 2 \(the exposure is missing or negative\)/)
  })

  it('collinear terms and too few rows', () => {
    fails(() => fitPoisson(y, [ones(n), time, time.map((t) => 2 * t + 1)], ['intercept', 'time', 'trend2']), 'singular_design', /term "trend2" is a linear combination of "intercept", "time"/)
    fails(() => fitPoisson(y.subarray(0, 2), [ones(2), time.subarray(0, 2)], names), 'too_few_observations', /2 rows for 2 terms/)
  })

  it('separation: a month with no events in any year (the dummy runs to minus infinity)', () => {
    const m = 24
    const month = Float64Array.from({ length: m }, (_, i) => (i % 12) + 1)
    const counts = Float64Array.from({ length: m }, (_, i) => (month[i] === 7 ? 0 : 3 + ((i * 7) % 5)))
    const columns = [ones(m), Float64Array.from({ length: m }, (_, i) => i + 1)]
    const terms = ['intercept', 'time']
    for (let k = 2; k <= 12; k++) {
      columns.push(month.map((v) => (v === k ? 1 : 0)))
      terms.push(`month_${k}`)
    }
    const err = fails(() => fitPoisson(counts, columns, terms), 'singular_design', /separation: the counts are 0 in every row where term "month_7" can push the fitted mean down \(2 rows: 7, 19\), so the coefficient of "month_7" runs to minus infinity/)
    expect(err.issues).toEqual(['month_7'])
  })

  it('separation: no events at all after the break (level runs to minus infinity)', () => {
    const m = 16
    const t = Float64Array.from({ length: m }, (_, i) => i + 1)
    const level = t.map((v) => (v >= 11 ? 1 : 0))
    const slope = t.map((v) => Math.max(0, v - 11))
    const counts = t.map((v) => (v >= 11 ? 0 : 4 + (v % 3)))
    const labels = Array.from(t, (v) => `P${v}`)
    fails(() => fitPoisson(counts, [ones(m), t, level, slope], ['intercept', 'time', 'level', 'slope'], undefined, { rowLabels: labels }), 'singular_design', /term "level" can push the fitted mean down \(6 rows: P11, P12, P13, P14, P15, P16\), so the coefficient of "level" runs to minus infinity/)
  })

  it('zero counts that no term singles out one way are not separation', () => {
    // "shock" is +1 on one zero row and -1 on another: the positive rows do not pin it, but
    // no direction lowers both means, so the estimate exists.
    const counts = Float64Array.from([3, 0, 5, 4, 0, 6, 5, 7])
    const shock = Float64Array.from([0, 1, 0, 0, -1, 0, 0, 0])
    expect(separationDirection(counts, [ones(n), time, shock])).toBeNull()
    const f = fitPoisson(counts, [ones(n), time, shock], ['intercept', 'time', 'shock'])
    expect(Number.isFinite(f.beta[2])).toBe(true)
    // score equation of "shock": mu_2 = mu_5
    rel(f.mu[1], f.mu[4], 1e-9, 'mu balanced')
    // with both zero rows on the same side it is separation
    expect(separationDirection(counts, [ones(n), time, shock.map(Math.abs)])).not.toBeNull()
  })

  it('all counts zero', () => {
    fails(() => fitPoisson(new Float64Array(n), cols, names), 'invalid_input', /every count is 0 \(8 rows\): a Poisson model needs at least one event/)
  })
})
