// Count models and AR(1) errors in design "its", through estimate() (designs/its.ts).
//
// c7_seatbelts_its_poisson, source (its README line): R 4.2.2 datasets::Seatbelts (UK road
// casualties, monthly Jan 1969 - Dec 1984, N=192); outcome = DriversKilled (car drivers killed,
// count); exposure = kms (distance driven); law = 1 from Feb 1983 (period 170); R 4.2.2
// glm(outcome ~ time + law + time_since_law + factor(month), offset = log(exposure), family =
// poisson) and family = quasipoisson, glm.control(epsilon = 1e-14). Tolerance (expected.json):
// relative 1e-8 on coefficients, SEs, rate ratios, dispersion, deviance; p-values 1e-6 relative
// or 1e-12 absolute.
//
// c8_nile_its_ar1, source (its README line): R 4.2.2 datasets::Nile (annual flow of the Nile at
// Aswan, 1871-1970, N=100); break: dam = 1 from 1899; R 4.2.2 nlme 3.1.162 gls(outcome ~ time +
// dam + time_since_dam, correlation = corAR1(form = ~time), method = 'ML' and 'REML');
// Prais-Winsten two-step by hand (lm.fit on transformed data). Tolerance (expected.json): gls
// phi, coefficients, SEs, sigma relative 1e-5; at_phi_profile relative 1e-6; prais_winsten and
// ols relative 1e-9.
//
// Refusals on edited copies of those panels.
import { describe, expect, it } from 'vitest'
import type { EstimateResult } from '../../shared/engine/result'
import { pTwoSidedT, tQuantileAt } from '../../server/engine/distributions'
import { estimate } from '../../server/engine/estimate'
import type { CsvRecord } from '../../server/engine/panel'
import { type Expected, fails, loadCase } from './helpers'

/** |got - exp| <= tol |exp| (+ abs). */
function rel(got: number | null | undefined, exp: number, tol: number, label: string, abs = 0): void {
  expect(got, label).toBeTypeOf('number')
  expect(Math.abs((got as number) - exp), `${label}: got ${got}, expected ${exp}`).toBeLessThanOrEqual(tol * Math.abs(exp) + abs)
}

function recordsOf(c: ReturnType<typeof loadCase>): CsvRecord[] {
  if (!('records' in c.panel)) throw new Error('records expected')
  return c.panel.records
}

/** Sample autocorrelations r_1..r_L (Box and Jenkins 1976), written out independently of the engine. */
function acf(e: number[], maxLag: number): number[] {
  const n = e.length
  const m = e.reduce((s, v) => s + v, 0) / n
  const den = e.reduce((s, v) => s + (v - m) ** 2, 0)
  return Array.from({ length: maxLag }, (_, j) => {
    let s = 0
    for (let t = j + 1; t < n; t++) s += (e[t] - m) * (e[t - j - 1] - m)
    return s / den
  })
}

const c7 = loadCase('c7_seatbelts_its_poisson')
const c8 = loadCase('c8_nile_its_ar1')

describe('c7_seatbelts_its_poisson through estimate() (source: its README)', () => {
  const e = c7.expected
  const tol = 1e-8
  const pTol = (got: number, exp: number, label: string) => rel(got, exp, 1e-6, label, 1e-12)
  /** Reference names -> ours: law is the level change, time_since_law the slope change, month_k our season_k. */
  const ours = (ref: string) => ({ law: 'level', time_since_law: 'slope' })[ref] ?? ref.replace(/^month_/, 'season_')
  const spec = (family: 'poisson' | 'quasipoisson', its: Record<string, unknown> = {}) => ({
    design: 'its',
    its: { breaks: [e.spec.first_post_period], seasonality: 'month', seasonColumn: 'month', family, exposure: 'exposure', ...its },
  })
  const poisson = estimate(c7.panel, spec('poisson'))
  const quasi = estimate(c7.panel, spec('quasipoisson'))

  it('names its source; the model and result shape', () => {
    expect(c7.source).toMatch(/glm\(outcome ~ time \+ law \+ time_since_law \+ factor\(month\), offset = log\(exposure\), family = poisson\) and family = quasipoisson/)
    for (const r of [poisson, quasi]) {
      expect(r.nObs).toBe(e.n_obs)
      expect(r.nUnits).toBe(1)
      expect(r.fit.kFull).toBe(e.fit.k)
      expect(Object.keys(r.coefficients)).toEqual(Object.keys(e.coefficients).map(ours))
      expect(r.vcov).toBe('iid')
      expect(r.hacLag).toBeNull()
      expect(r.durbinWatson).toBeNull()
      expect(r.errors).toBeNull()
      rel(r.countFit?.dispersion, e.fit.dispersion_pearson, tol, 'dispersion')
      rel(r.countFit?.deviance, e.fit.deviance, tol, 'deviance')
      // fit: Pearson X2 as ssr, sqrt(dispersion) as sigma, deviance R2 (definitions: X2 = sum (y - mu)^2 / mu)
      rel(r.fit.ssr, e.fit.pearson_chi2, tol, 'Pearson X2')
      rel(r.fit.sigma, Math.sqrt(e.fit.dispersion_pearson), tol, 'sigma')
      rel(r.fit.rSquared, 1 - e.fit.deviance / e.fit.null_deviance, tol, 'deviance R2')
    }
  })

  it('poisson: every coefficient, model SE, z test (normal p) and Wald rate ratio', () => {
    for (const [ref, x] of Object.entries(e.coefficients as Record<string, Expected>)) {
      const c = poisson.coefficients[ours(ref)]
      const l = `poisson ${ref}`
      rel(c.estimate, x.estimate, tol, `${l} estimate`)
      rel(c.se, x.se, tol, `${l} se`)
      expect(c.seIid, `${l} seIid`).toBe(c.se)
      expect(c.df, `${l} df`).toBe(e.fit.df_residual)
      rel(c.t, x.z, tol, `${l} z`)
      pTol(c.p, x.p, `${l} p`)
      rel(c.rateRatio, x.rate_ratio, tol, `${l} rate ratio`)
      rel(c.rateRatioLow, x.ci95_rr[0], tol, `${l} rate ratio low`)
      rel(c.rateRatioHigh, x.ci95_rr[1], tol, `${l} rate ratio high`)
      // the log-scale interval is the log of the rate ratio's
      rel(c.ciLow, Math.log(x.ci95_rr[0]), tol, `${l} ciLow`, 1e-14)
      rel(c.ciHigh, Math.log(x.ci95_rr[1]), tol, `${l} ciHigh`, 1e-14)
    }
  })

  it('quasipoisson: the same coefficients, dispersion-scaled SEs, t on N-K df', () => {
    for (const [ref, x] of Object.entries(e.coefficients as Record<string, Expected>)) {
      const c = quasi.coefficients[ours(ref)]
      const l = `quasipoisson ${ref}`
      rel(c.estimate, x.estimate, tol, `${l} estimate`)
      rel(c.se, x.se_quasi, tol, `${l} se`)
      rel(c.seIid, x.se, tol, `${l} seIid (the Poisson SE)`)
      expect(c.df, `${l} df`).toBe(e.fit.df_residual)
      rel(c.t, x.t_quasi, tol, `${l} t`)
      pTol(c.p, x.p_quasi, `${l} p`)
      rel(c.rateRatio, x.rate_ratio, tol, `${l} rate ratio`)
      // bounds on the same t as p: ci95_rr_quasi_t = exp(b -/+ qt(0.975, N-K) se_quasi)
      rel(c.rateRatioLow, x.ci95_rr_quasi_t[0], tol, `${l} rate ratio low`)
      rel(c.rateRatioHigh, x.ci95_rr_quasi_t[1], tol, `${l} rate ratio high`)
      rel(c.ciLow, Math.log(x.ci95_rr_quasi_t[0]), tol, `${l} ciLow`, 1e-14)
      rel(c.ciHigh, Math.log(x.ci95_rr_quasi_t[1]), tol, `${l} ciHigh`, 1e-14)
    }
  })

  it('headline: analytic inference for a single series; effect.p is the level coefficient p', () => {
    for (const r of [poisson, quasi]) {
      expect(r.inference?.method).toBe('analytic')
      expect(r.effect.term).toBe('level')
      expect(r.effect.p).toBe(r.coefficients.level.p)
      expect(r.inference?.p).toBe(r.coefficients.level.p)
      expect(r.effect.ciLow).toBe(r.coefficients.level.ciLow)
      expect(r.effect.ciHigh).toBe(r.coefficients.level.ciHigh)
      expect(r.effect.rateRatio).toBe(r.coefficients.level.rateRatio)
    }
    pTol(poisson.effect.p, e.coefficients.law.p, 'poisson effect p')
    pTol(quasi.effect.p, e.coefficients.law.p_quasi, 'quasipoisson effect p')
  })

  it('residualAcf: autocorrelations of the Pearson residuals at the reference fit, lags 1..24', () => {
    // mu from the reference coefficients: exposure * exp(x'b)
    const b = e.coefficients as Record<string, Expected>
    const pearson = recordsOf(c7).map((r) => {
      const month = Number(r.month)
      const eta = b.intercept.estimate + b.time.estimate * Number(r.time) + b.law.estimate * Number(r.law) + b.time_since_law.estimate * Number(r.time_since_law) + (month > 1 ? b[`month_${month}`].estimate : 0)
      const mu = Number(r.exposure) * Math.exp(eta)
      return (Number(r.outcome) - mu) / Math.sqrt(mu)
    })
    const expected = acf(pearson, 24)
    for (const r of [poisson, quasi]) {
      expect(r.residualAcf).toHaveLength(24)
      r.residualAcf!.forEach((v, j) => rel(v, expected[j], 1e-6, `acf lag ${j + 1}`, 1e-9))
    }
  })

  it('warns in plain words: overdispersion under poisson, autocorrelated residuals under both', () => {
    expect(poisson.warnings.join(' ')).toMatch(/Pearson dispersion 1\.97\), so the Poisson standard errors are too small; use its\.family "quasipoisson"/)
    expect(quasi.warnings.join(' ')).not.toMatch(/dispersion/)
    for (const r of [poisson, quasi]) expect(r.warnings.join(' ')).toMatch(/Pearson residuals of the count model are autocorrelated \(lag 1: 0\.26/)
  })

  it('seasonality from dated periods ("YYYY-MM") and the break as a month give the same fit', () => {
    const dated = recordsOf(c7).map((r) => ({ ...r, period: `${r.year}-${String(r.month).padStart(2, '0')}` }))
    const r = estimate({ records: dated }, { design: 'its', its: { breaks: ['1983-02'], seasonality: 'month', family: 'quasipoisson', exposure: 'exposure' } })
    for (const [name, c] of Object.entries(quasi.coefficients)) {
      rel(r.coefficients[name].estimate, c.estimate, 1e-10, `${name} estimate`, 1e-14)
      rel(r.coefficients[name].se, c.se, 1e-10, `${name} se`)
    }
  })

  it('without an exposure: the counts themselves, no offset', () => {
    const r = estimate(c7.panel, spec('poisson', { exposure: undefined }))
    expect(r.coefficients.level.estimate).not.toBeCloseTo(e.coefficients.law.estimate, 3)
    expect(r.countFit!.deviance).toBeGreaterThan(0)
  })

  it('a row with a missing exposure is dropped with a warning, as any missing value', () => {
    const recs = recordsOf(c7).map((r, i) => (i === 10 ? { ...r, exposure: '' } : r))
    const r = estimate({ records: recs }, spec('poisson'))
    expect(r.nObs).toBe(191)
    expect(r.warnings.join(' ')).toMatch(/dropped 1 row with missing values \(exposure: 1\)/)
  })
})

describe('c8_nile_its_ar1 through estimate() (source: its README)', () => {
  const e = c8.expected
  const spec = (errors: string, extra: Record<string, unknown> = {}) => ({ design: 'its', its: { breaks: [e.spec.first_post_period], errors, ...extra } })
  /** Reference names -> ours. */
  const ours = (ref: string) => ({ dam: 'level', time_since_dam: 'slope' })[ref] ?? ref
  const n = e.n_obs
  const k = 4
  const q = tQuantileAt(0.975, n - k)

  function common(r: EstimateResult, kind: string): void {
    expect(r.nObs).toBe(n)
    expect(Object.keys(r.coefficients)).toEqual(['intercept', 'time', 'level', 'slope'])
    expect(r.vcov).toBe('iid')
    expect(r.hacLag).toBeNull()
    expect(r.countFit).toBeNull()
    expect(r.errors?.kind).toBe(kind)
    for (const [name, c] of Object.entries(r.coefficients)) {
      expect(c.df, `${name} df`).toBe(n - k)
      expect(c.seIid, `${name} seIid`).toBe(c.se)
      rel(c.t, c.estimate / c.se, 1e-14, `${name} t`)
      rel(c.p, pTwoSidedT(c.t, n - k), 1e-12, `${name} p`)
      rel(c.ciLow, c.estimate - q * c.se, 1e-12, `${name} ciLow`, 1e-12)
      rel(c.ciHigh, c.estimate + q * c.se, 1e-12, `${name} ciHigh`, 1e-12)
    }
    expect(r.inference?.method).toBe('analytic')
    expect(r.effect.p).toBe(r.coefficients.level.p)
    expect(r.effect.estimate).toBe(r.coefficients.level.estimate)
    expect(r.residualAcf).toHaveLength(24)
    expect(r.warnings).toEqual([])
  }

  it('names its source', () => {
    expect(c8.source).toMatch(/nlme 3\.1\.162 gls\(outcome ~ time \+ dam \+ time_since_dam, correlation = corAR1\(form = ~time\), method = 'ML' and 'REML'\)/)
  })

  for (const [errors, block] of [
    ['ar1_ml', 'gls_ML'],
    ['ar1_reml', 'gls_REML'],
  ] as const) {
    it(`${errors}: rho, coefficients and SEs against gls (1e-5) and the profile optimum (1e-6)`, () => {
      const r = estimate(c8.panel, spec(errors))
      common(r, errors)
      const g = e[block]
      rel(r.errors!.rho, g.phi, 1e-5, `${errors} rho vs gls`)
      rel(r.errors!.rho, g.at_phi_profile.phi, 1e-6, `${errors} rho vs profile`)
      for (const [ref, x] of Object.entries(g.coefficients as Record<string, Expected>)) {
        const c = r.coefficients[ours(ref)]
        rel(c.estimate, x.estimate, 1e-5, `${errors} ${ref} estimate vs gls`)
        rel(c.se, x.se, 1e-5, `${errors} ${ref} se vs gls`)
        // t = b/se with b and se each within 1e-5 of gls: within about 2e-5
        rel(c.t, x.t, 2e-5, `${errors} ${ref} t vs gls`)
        const y = g.at_phi_profile.coefficients[ref]
        rel(c.estimate, y.estimate, 1e-6, `${errors} ${ref} estimate vs profile`)
        rel(c.se, y.se, 1e-6, `${errors} ${ref} se vs profile`)
      }
      // fit.sigma is the SE scale sqrt(RSS_R/(N-K)): gls' sigma for REML, sqrt(N/(N-K)) times it for ML
      const scale = errors === 'ar1_ml' ? Math.sqrt(n / (n - k)) : 1
      rel(r.fit.sigma, g.at_phi_profile.sigma * scale, 1e-6, `${errors} sigma`)
    })
  }

  it('prais_winsten: rho, coefficients, SEs, t and p (closed form, 1e-9)', () => {
    const r = estimate(c8.panel, spec('prais_winsten'))
    common(r, 'prais_winsten')
    const pw = e.prais_winsten
    rel(r.errors!.rho, pw.rho, 1e-9, 'rho')
    rel(r.fit.sigma, pw.sigma, 1e-9, 'sigma')
    for (const [ref, x] of Object.entries(pw.coefficients as Record<string, Expected>)) {
      const c = r.coefficients[ours(ref)]
      rel(c.estimate, x.estimate, 1e-9, `${ref} estimate`)
      rel(c.se, x.se, 1e-9, `${ref} se`)
      rel(c.t, x.t, 1e-9, `${ref} t`)
      rel(c.p, x.p, 1e-9, `${ref} p`)
    }
  })

  it('newey_west (the default) is unchanged: OLS estimates and classical SEs; errors says so', () => {
    const r = estimate(c8.panel, spec('newey_west', { hacLag: 4 }))
    expect(r.vcov).toBe('hac')
    expect(r.hacLag).toBe(4)
    expect(r.errors).toEqual({ kind: 'newey_west', rho: null })
    for (const [ref, x] of Object.entries(e.ols.coefficients as Record<string, Expected>)) {
      const c = r.coefficients[ours(ref)]
      rel(c.estimate, x.estimate, 1e-9, `${ref} estimate`)
      rel(c.seIid, x.se_iid, 1e-9, `${ref} se_iid`)
    }
    // the lag-1 autocorrelation of OLS residuals (mean 0) is the Prais-Winsten rho
    rel(r.residualAcf![0], e.prais_winsten.rho, 1e-9, 'acf lag 1')
    expect(r.residualAcf).toHaveLength(24)
    expect(r.durbinWatson).toBeGreaterThan(0)
    // the default spec gives the same
    const d = estimate(c8.panel, { design: 'its', its: { breaks: [1899], hacLag: 4 } })
    expect(d.coefficients).toEqual(r.coefficients)
    expect(d.errors).toEqual(r.errors)
  })

  it('AR(1) residual checks use the whitened residuals: near white noise here', () => {
    const r = estimate(c8.panel, spec('ar1_reml'))
    expect(Math.abs(r.residualAcf![0])).toBeLessThan(2 / Math.sqrt(n))
    expect(r.durbinWatson!).toBeGreaterThan(1.8)
    expect(r.durbinWatson!).toBeLessThan(2.2)
  })

  it('a short series: AR(1) runs from 10 periods, with a warning that residual checks are unreliable below 50', () => {
    const short = recordsOf(c8).slice(0, 40)
    const r = estimate({ records: short }, spec('ar1_ml'))
    expect(r.nObs).toBe(40)
    expect(r.residualAcf).toHaveLength(10)
    expect(r.warnings).toContain('only 40 periods: the Durbin-Watson statistic and residual autocorrelations are unreliable on a series this short (common practice: about 50 periods or more)')
  })

  it('hacLag with AR(1) errors is ignored, with a warning', () => {
    const r = estimate(c8.panel, spec('prais_winsten', { hacLag: 3 }))
    expect(r.warnings).toEqual(['its.hacLag 3 is ignored: its.errors "prais_winsten" models the autocorrelation instead of Newey-West errors'])
  })
})

describe('AR(1) errors on a comparison series', () => {
  const c1 = loadCase('c1_synthetic_cits_two_breaks')
  it('fits the difference series; the headline follows the placebo units', () => {
    const e = c1.expected
    const spec = (errors: string) => ({ design: 'its', treated: [e.spec.treated_unit], its: { breaks: e.spec.breaks, seasonality: 'month', seasonColumn: 'month', comparison: 'mean', errors } })
    const r = estimate(c1.panel, spec('ar1_reml'))
    expect(r.errors?.kind).toBe('ar1_reml')
    expect(Math.abs(r.errors!.rho!)).toBeLessThan(1)
    expect(r.comparison?.kind).toBe('mean')
    expect(r.effect.term).toBe('level_1')
    expect(r.effect.estimate).toBe(r.coefficients.level_1.estimate)
    expect(r.inference?.method).toBe('permutation')
    // the same terms as under Newey-West, and estimates of the same size (GLS and OLS on one series)
    const nw = estimate(c1.panel, spec('newey_west'))
    expect(Object.keys(r.coefficients)).toEqual(Object.keys(nw.coefficients))
    expect(Math.abs(r.coefficients.level_1.estimate - nw.coefficients.level_1.estimate)).toBeLessThan(4 * nw.coefficients.level_1.se)
  })
})

describe('refusals', () => {
  const recs7 = recordsOf(c7)
  const recs8 = recordsOf(c8)
  const count = (its: Record<string, unknown> = {}, extra: Record<string, unknown> = {}) => ({
    design: 'its',
    ...extra,
    its: { breaks: [170], seasonality: 'month', seasonColumn: 'month', family: 'poisson', exposure: 'exposure', ...its },
  })
  const edit = (i: number, col: string, v: string) => recs7.map((r, j) => (j === i ? { ...r, [col]: v } : r))

  it('negative or fractional counts, zero or negative exposure (naming the period)', () => {
    fails(() => estimate({ records: edit(4, 'outcome', '-3') }, count()), 'invalid_input', /the count is negative \(-3\) in row 5 \(period 5\): a Poisson model needs counts 0, 1, 2/)
    fails(() => estimate({ records: edit(4, 'outcome', '10.5') }, count()), 'invalid_input', /the count is not a whole number \(10\.5\) in row 5 \(period 5\)/)
    fails(() => estimate({ records: edit(6, 'exposure', '0') }, count()), 'non_positive_log', /exposure "exposure" is 0 in row 7 \(period 7\): the exposure must be positive/)
    fails(() => estimate({ records: edit(6, 'exposure', '-10') }, count({ family: 'quasipoisson' })), 'non_positive_log', /exposure "exposure" is -10 in row 7/)
  })

  it('a count family with a comparison, the log transform or AR(1) errors; an exposure without a count family', () => {
    const two = [...recs7, ...recs7.map((r) => ({ ...r, unit: 'XX' }))]
    fails(() => estimate({ records: two }, count({ comparison: 'mean' }, { treated: ['GB'] })), 'invalid_spec', /its\.family "poisson" models the counts of one series, but its\.comparison is "mean": a difference of counts is not a count/)
    fails(() => estimate(c7.panel, count({}, { transform: 'log' })), 'invalid_spec', /transform "log" with its\.family "poisson": the count model already works on the log scale/)
    fails(() => estimate(c7.panel, count({ family: 'quasipoisson', errors: 'ar1_ml' })), 'invalid_spec', /its\.errors "ar1_ml" with its\.family "quasipoisson": AR\(1\) errors are not combined with count models here/)
    fails(() => estimate(c7.panel, count({ family: 'gaussian' })), 'invalid_spec', /its\.exposure "exposure" is the offset of a count model, but its\.family is "gaussian"/)
  })

  it('AR(1) errors on a series with missing periods between its ends', () => {
    const gappy = recs8.filter((r) => r.period !== '1900' && r.period !== 1900)
    expect(gappy).toHaveLength(99)
    for (const errors of ['ar1_ml', 'ar1_reml', 'prais_winsten']) {
      fails(
        () => estimate({ records: gappy }, { design: 'its', its: { breaks: [1899], errors } }),
        'invalid_input',
        new RegExp(`its\\.errors "${errors}" takes the rows as consecutive periods, but the series has 1 missing period between its ends \\(the first: 1900\\); fill in .* or use its\\.errors "newey_west"`),
      )
    }
    // a missing outcome value leaves the same gap
    const blank = recs8.map((r) => (String(r.period) === '1950' ? { ...r, outcome: '' } : r))
    fails(() => estimate({ records: blank }, { design: 'its', its: { breaks: [1899], errors: 'ar1_ml' } }), 'invalid_input', /1 missing period between its ends \(the first: 1950\)/)
    // Newey-West keeps its warning
    const nw = estimate({ records: gappy }, { design: 'its', its: { breaks: [1899], hacLag: 2 } })
    expect(nw.warnings.join(' ')).toMatch(/the series has 1 missing period between its ends: time counts them, but the Newey-West errors treat neighbouring rows as adjacent/)
  })

  it('series too short for the model', () => {
    fails(() => estimate({ records: recs8.slice(0, 9) }, { design: 'its', its: { breaks: [1875], errors: 'ar1_reml' } }), 'too_few_observations', /too few observations for AR\(1\) errors: 9 periods for 4 terms .* need at least 10 periods/)
    fails(() => estimate({ records: recs7.slice(0, 14) }, count()), 'no_post_periods', /the break 170 comes after the last period/)
    fails(() => estimate({ records: recs7.slice(160, 174) }, count()), 'too_few_observations', /too few observations/)
  })
})
