// Regression with AR(1) errors (ar1Regression.ts) against c8_nile_its_ar1, source (its README
// line): R 4.2.2 datasets::Nile (annual flow of the Nile at Aswan, 1871-1970, N=100); break:
// dam = 1 from 1899 (time 29); time_since_dam = max(0, time - 29). R 4.2.2 nlme 3.1.162
// gls(outcome ~ time + dam + time_since_dam, correlation = corAR1(form = ~time), method =
// 'ML' and 'REML'); Prais-Winsten two-step by hand (lm.fit on transformed data).
// Refusals and the autocorrelation helper on small invented series.
import { describe, expect, it } from 'vitest'
import { ar1Profile, fitAr1, residualAutocorrelation } from '../../server/engine/ar1Regression'
import { pTwoSidedT } from '../../server/engine/distributions'
import { EngineError } from '../../server/engine/errors'
import { ols } from '../../server/engine/ols'
import { loadCase, nearP, fails } from './helpers'

function rel(got: number, exp: number, tol: number, label: string): void {
  expect(Math.abs(got - exp), `${label}: got ${got}, expected ${exp}`).toBeLessThanOrEqual(tol * Math.abs(exp))
}


/** The c8 design: intercept, time, level (dam), slope (time_since_dam). */
function c8Design() {
  const c = loadCase('c8_nile_its_ar1')
  if (!('records' in c.panel)) throw new Error('records expected')
  const recs = c.panel.records
  const col = (name: string) => Float64Array.from(recs, (r) => Number(r[name]))
  const n = recs.length
  const period = col('period')
  const time = col('time')
  const first = c.expected.spec.first_post_period as number
  const breakTime = time[period.indexOf(first)]
  const level = period.map((p) => (p >= first ? 1 : 0))
  const slope = time.map((t) => Math.max(0, t - breakTime))
  // the panel's own columns agree with the definitions
  expect(Array.from(level)).toEqual(Array.from(col('dam')))
  expect(Array.from(slope)).toEqual(Array.from(col('time_since_dam')))
  const columns = [new Float64Array(n).fill(1), time, level, slope]
  const refNames = ['intercept', 'time', 'dam', 'time_since_dam']
  return { ...c, y: col('outcome'), columns, names: ['intercept', 'time', 'level', 'slope'], refNames, n }
}

describe('c8_nile_its_ar1 (source: R 4.2.2 nlme 3.1.162 gls corAR1 ML and REML; Prais-Winsten two-step by hand)', () => {
  const d = c8Design()
  const e = d.expected
  const k = d.columns.length

  it('names its source; OLS on the same design matches (relative 1e-9)', () => {
    expect(d.source).toMatch(/nlme 3\.1\.162 gls\(outcome ~ time \+ dam \+ time_since_dam, correlation = corAR1\(form = ~time\)/)
    const f = ols(d.y, d.columns, d.names)
    const s2 = f.ssr / (d.n - k)
    d.refNames.forEach((ref, j) => {
      rel(f.beta[j], e.ols.coefficients[ref].estimate, 1e-9, `ols ${ref}`)
      rel(Math.sqrt(s2 * f.bread.get(j, j)), e.ols.coefficients[ref].se_iid, 1e-9, `ols ${ref} se`)
    })
  })

  for (const [method, key] of [
    ['ml', 'gls_ML'],
    ['reml', 'gls_REML'],
  ] as const) {
    it(`${key}: at the profile optimum (phi, coefficients, SEs, sigma relative 1e-6)`, () => {
      const x = e[key]
      const f = fitAr1(d.y, d.columns, d.names, method)
      expect(f.method).toBe(method)
      expect(f.dfResidual).toBe(d.n - k)
      rel(f.rho, x.phi_profile, 1e-6, 'phi')
      rel(f.rho, x.at_phi_profile.phi, 1e-6, 'at_phi_profile phi')
      rel(Math.sqrt(f.sigma2), x.at_phi_profile.sigma, 1e-6, 'sigma')
      d.refNames.forEach((ref, j) => {
        rel(f.beta[j], x.at_phi_profile.coefficients[ref].estimate, 1e-6, `${ref} estimate`)
        rel(f.se[j], x.at_phi_profile.coefficients[ref].se, 1e-6, `${ref} se`)
      })
    })

    it(`${key}: against nlme's own optimum (phi, coefficients, SEs, sigma relative 1e-5; loglik absolute 1e-6; t and p)`, () => {
      const x = e[key]
      const f = fitAr1(d.y, d.columns, d.names, method)
      rel(f.rho, x.phi, 1e-5, 'phi')
      rel(Math.sqrt(f.sigma2), x.sigma, 1e-5, 'sigma')
      expect(Math.abs((f.logLik as number) - x.loglik), `loglik ${f.logLik} vs ${x.loglik}`).toBeLessThanOrEqual(1e-6)
      d.refNames.forEach((ref, j) => {
        const c = x.coefficients[ref]
        rel(f.beta[j], c.estimate, 1e-5, `${ref} estimate`)
        rel(f.se[j], c.se, 1e-5, `${ref} se`)
        rel(f.beta[j] / f.se[j], c.t, 1e-5, `${ref} t`)
        // p at our optimum vs nlme's: the t statistics differ by up to 1e-5 relative
        expect(Math.abs(pTwoSidedT(f.beta[j] / f.se[j], f.dfResidual) - c.p), `${ref} p`).toBeLessThanOrEqual(1e-4 * c.p + 1e-12)
      })
    })

    it(`${key}: the profile likelihood at nlme's phi_profile equals loglik_profile_part (+ the constant), and its score is right`, () => {
      const x = e[key]
      const m = method === 'ml' ? d.n : d.n - k
      const p = ar1Profile(d.y, d.columns, d.names, method, x.phi_profile)
      expect(Math.abs(p.logLik + (m / 2) * (1 + Math.log(2 * Math.PI)) - x.at_phi_profile.loglik_profile_part)).toBeLessThan(1e-8)
      for (const rho of [-0.6, 0, 0.3, 0.9]) {
        const h = 1e-5
        const fd = (ar1Profile(d.y, d.columns, d.names, method, rho + h).logLik - ar1Profile(d.y, d.columns, d.names, method, rho - h).logLik) / (2 * h)
        const s = ar1Profile(d.y, d.columns, d.names, method, rho).score
        expect(Math.abs(s - fd), `score at ${rho}: ${s} vs ${fd}`).toBeLessThan(1e-6 * (1 + Math.abs(fd)))
      }
      // at the fitted rho the score is 0 and the likelihood is at its top
      const f = fitAr1(d.y, d.columns, d.names, method)
      expect(Math.abs(ar1Profile(d.y, d.columns, d.names, method, f.rho).score)).toBeLessThan(1e-8)
      for (const step of [-1e-4, 1e-4]) expect(ar1Profile(d.y, d.columns, d.names, method, f.rho + step).logLik).toBeLessThan(f.logLik as number)
    })
  }

  it('prais_winsten two-step: rho, sigma, coefficients, SEs, t, p (relative 1e-9)', () => {
    const x = e.prais_winsten
    const f = fitAr1(d.y, d.columns, d.names, 'prais_winsten')
    expect(f.logLik).toBeNull()
    expect(f.dfResidual).toBe(x.df_residual)
    rel(f.rho, x.rho, 1e-9, 'rho')
    rel(Math.sqrt(f.sigma2), x.sigma, 1e-9, 'sigma')
    d.refNames.forEach((ref, j) => {
      const c = x.coefficients[ref]
      rel(f.beta[j], c.estimate, 1e-9, `${ref} estimate`)
      rel(f.se[j], c.se, 1e-9, `${ref} se`)
      rel(f.beta[j] / f.se[j], c.t, 1e-9, `${ref} t`)
      nearP(pTwoSidedT(f.beta[j] / f.se[j], f.dfResidual), c.p, `${ref} p`)
    })
  })

  it('residuals in the original scale, whitened residuals near white noise', () => {
    const f = fitAr1(d.y, d.columns, d.names, 'ml')
    for (let t = 0; t < d.n; t++) {
      let fit = 0
      d.columns.forEach((c, j) => (fit += c[t] * f.beta[j]))
      expect(Math.abs(f.residuals[t] - (d.y[t] - fit))).toBeLessThan(1e-9)
    }
    const raw = residualAutocorrelation(f.residuals, 1)[0]
    const white = residualAutocorrelation(f.innovations, 1)[0]
    expect(raw).toBeGreaterThan(0.1)
    expect(Math.abs(white)).toBeLessThan(Math.abs(raw))
  })

  it('times the three fits (N = 100, K = 4)', () => {
    for (const m of ['ml', 'reml', 'prais_winsten'] as const) {
      fitAr1(d.y, d.columns, d.names, m)
      const t0 = performance.now()
      for (let r = 0; r < 5; r++) fitAr1(d.y, d.columns, d.names, m)
      expect((performance.now() - t0) / 5, m).toBeLessThan(200)
    }
  })
})

describe('refusals and helpers on invented series', () => {
  const series = (n: number) => Float64Array.from({ length: n }, (_, i) => 10 + Math.sin(i * 1.3) + 0.2 * i)
  const design = (n: number, extra = 0) => {
    const cols = [new Float64Array(n).fill(1), Float64Array.from({ length: n }, (_, i) => i + 1)]
    const names = ['intercept', 'time']
    for (let q = 0; q < extra; q++) {
      cols.push(Float64Array.from({ length: n }, (_, i) => Math.cos((i + 1) * (q + 2))))
      names.push(`x${q + 1}`)
    }
    return { cols, names }
  }

  it('too short: fewer than 10 periods, or fewer than K + 3', () => {
    const a = design(9)
    for (const m of ['ml', 'reml', 'prais_winsten'] as const) {
      fails(() => fitAr1(series(9), a.cols, a.names, m), 'too_few_observations', /too few observations for AR\(1\) errors: 9 periods for 2 terms .*need at least 10 periods and K \+ 3 = 5/)
    }
    const b = design(12, 8)
    fails(() => fitAr1(series(12), b.cols, b.names, 'ml'), 'too_few_observations', /12 periods for 10 terms .* K \+ 3 = 13/)
    const c = design(13, 8)
    expect(() => fitAr1(series(13), c.cols, c.names, 'prais_winsten')).not.toThrow()
  })

  it('a gap in the series and collinear terms', () => {
    const a = design(20)
    const y = series(20)
    y[6] = NaN
    fails(() => fitAr1(y, a.cols, a.names, 'ml'), 'invalid_input', /the outcome is NaN in row 7: AR\(1\) errors need a complete series/)
    fails(() => fitAr1(series(20), [...a.cols, a.cols[1].map((t) => 3 * t)], [...a.names, 'time3'], 'reml'), 'singular_design', /term "time3" is a linear combination of "time"/)
  })

  it('a likelihood that keeps rising towards rho = 1 is refused as a unit root', () => {
    const a = design(40)
    const smooth = Float64Array.from({ length: 40 }, (_, i) => Math.sin((i + 1) / 10))
    fails(() => fitAr1(smooth, a.cols, a.names, 'reml'), 'not_converged', /restricted likelihood keeps rising towards rho = 1 \(at rho = 0\.99991\), so the errors look non-stationary \(a unit root\)/)
  })

  it('a known AR(1) structure is recovered in sign and size', () => {
    // deterministic pseudo-noise (a linear congruential sequence) filtered by rho = 0.6
    const n = 400
    let s = 12345
    const noise = () => {
      s = (s * 1103515245 + 12345) % 2147483648
      return s / 2147483648 - 0.5
    }
    const e = new Float64Array(n)
    for (let t = 0; t < n; t++) e[t] = (t ? 0.6 * e[t - 1] : 0) + noise()
    const a = design(n)
    const y = Float64Array.from(e, (v, t) => 5 + 0.01 * (t + 1) + v)
    for (const m of ['ml', 'reml', 'prais_winsten'] as const) {
      const f = fitAr1(y, a.cols, a.names, m)
      expect(f.rho, m).toBeGreaterThan(0.5)
      expect(f.rho, m).toBeLessThan(0.7)
    }
  })

  it('residualAutocorrelation: lags 1..maxLag of the centred series', () => {
    const r = residualAutocorrelation(Float64Array.from([1, -1, 1, -1]), 3)
    expect(r[0]).toBeCloseTo(-0.75, 14)
    expect(r[1]).toBeCloseTo(0.5, 14)
    expect(r[2]).toBeCloseTo(-0.25, 14)
    // centring: a constant shift changes nothing
    const shifted = residualAutocorrelation(Float64Array.from([11, 9, 11, 9]), 3)
    shifted.forEach((v, i) => expect(v).toBeCloseTo(r[i], 14))
    fails(() => residualAutocorrelation(Float64Array.from([1, 2, 3]), 3), 'invalid_input', /the largest lag must be a whole number from 1 to 2/)
    fails(() => residualAutocorrelation(Float64Array.from([1, 2, 3]), 0.5), 'invalid_input', /got 0\.5/)
  })
})
