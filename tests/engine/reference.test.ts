// Every case of the reference folder (tests/fixtures/reference, a verbatim copy of the
// shared checks), matched within the tolerances its README states. The source of each case
// is its README line, quoted in the test title: R 4.2.2 lm() with sandwich 3.0.2 (vcovCL,
// NeweyWest) and lmtest 0.9.40, data from AER 1.2.10 (Fatalities), R datasets (Seatbelts)
// and a synthetic panel generated in R; re-computed independently with statsmodels.
import { readFileSync, readdirSync, existsSync, statSync } from 'node:fs'
import path from 'node:path'
import { describe, expect, it } from 'vitest'
import { estimate as engineEstimate, scoreDonors } from '../../server/engine/index'
import type { EstimateResult } from '../../shared/engine/result'
import { type Expected, clusterVariants, loadCase, near, nearCi, nearP, referenceDir, repoRoot, unitsWith } from './helpers'

/** These cases check the analytic (model-based) numbers: the headline inference is tested in permutation.test.ts. */
const estimate: typeof engineEstimate = (panel, spec) => engineEstimate(panel, { inference: { method: 'analytic' }, ...(spec as object) })

function listFiles(dir: string, prefix = ''): string[] {
  return readdirSync(dir)
    .flatMap((name) => (statSync(path.join(dir, name)).isDirectory() ? listFiles(path.join(dir, name), `${prefix}${name}/`) : [`${prefix}${name}`]))
    .sort()
}

// The reference cases are copies of ../shared/checks. Only where that folder exists beside the
// project (it is absent from a plain checkout) is this comparison registered: the copies must
// then be byte-identical to it. Elsewhere the cases below run against the copies alone.
const shared = path.resolve(repoRoot, '../shared/checks')
if (existsSync(shared)) {
  describe('reference copies', () => {
    it('are byte-identical to ../shared/checks', () => {
      expect(listFiles(referenceDir)).toEqual(listFiles(shared))
      for (const f of listFiles(shared)) expect(readFileSync(path.join(referenceDir, f)).equals(readFileSync(path.join(shared, f))), f).toBe(true)
    })
  })
}

/** Each README names the general-purpose software the values came from. */
function checkSource(source: string): void {
  expect(source).toMatch(/R 4\.2\.2/)
}

/** Counts and the fit of the dummy regression. */
function checkFit(r: EstimateResult, e: Expected, fit: Expected, label: string): void {
  expect(r.nObs, `${label} nObs`).toBe(fit.n_obs)
  expect(r.fit.kFull, `${label} k_full`).toBe(fit.k_full)
  near(r.fit.ssr, fit.ssr, `${label} ssr`)
  near(r.fit.sigma, fit.sigma, `${label} sigma`)
  near(r.fit.rSquared, fit.r_squared, `${label} r_squared`)
  if (e) {
    expect(r.nUnits, `${label} n_units`).toBe(e.n_units)
    expect(r.nPeriods, `${label} n_periods`).toBe(e.n_periods)
  }
}

/**
 * Clustered coefficients under every smallSample choice: `run(variant)` estimates with that
 * choice; `names` maps reference names to ours.
 */
function checkClustered(run: (smallSample: string) => EstimateResult, e: Expected, coefs: Expected, fit: Expected, names: Record<string, string>): void {
  for (const [ours, theirs] of clusterVariants) {
    const r = run(ours)
    const label = `${e.case} ${ours}`
    checkFit(r, fit === e.fit ? e : null, fit, label)
    expect(r.nClusters, `${label} G`).toBe(fit.n_clusters)
    expect(r.smallSample).toBe(ours)
    const k = { nested: fit.k_nested, full: fit.k_full, slopes: fit.k_slopes, clusters: null, none: null }[ours]
    if (k !== null) expect(r.fit.kSmallSample, `${label} K`).toBe(k)
    for (const [ref, name] of Object.entries(names)) {
      const c = r.coefficients[name]
      const x = coefs[ref]
      expect(c, `${label} ${name}`).toBeDefined()
      near(c.estimate, x.estimate, `${label} ${name} estimate`)
      near(c.seIid, x.se_iid, `${label} ${name} se_iid`)
      if (x.se_cluster_variants[theirs] === null) continue // CR1_Kslopes is not defined without absorbed effects
      near(c.se, x.se_cluster_variants[theirs], `${label} ${name} se ${theirs}`)
      expect(c.df, `${label} ${name} df`).toBe(x.df)
      if (ours === 'full') {
        near(c.t, x.t_cluster, `${label} ${name} t`)
        nearP(c.p, x.p_cluster, `${label} ${name} p`)
        nearCi(c.ciLow, x.ci95_cluster[0], c.se, `${label} ${name} ci low`)
        nearCi(c.ciHigh, x.ci95_cluster[1], c.se, `${label} ${name} ci high`)
      }
    }
  }
  // classical errors: cluster "none"
  const r = run('iid')
  for (const [ref, name] of Object.entries(names)) {
    const c = r.coefficients[name]
    const x = coefs[ref]
    near(c.se, x.se_iid, `${e.case} iid ${name} se`)
    expect(c.df).toBe(x.df_iid)
    near(c.t, x.t_iid, `${e.case} iid ${name} t`)
    nearP(c.p, x.p_iid, `${e.case} iid ${name} p`)
    nearCi(c.ciLow, x.ci95_iid[0], c.se, `${e.case} iid ${name} ci low`)
    nearCi(c.ciHigh, x.ci95_iid[1], c.se, `${e.case} iid ${name} ci high`)
  }
  expect(r.nClusters).toBeNull()
  expect(r.smallSample).toBeNull()
}

const withVariant = (spec: Record<string, unknown>, v: string) => (v === 'iid' ? { ...spec, cluster: 'none' } : { ...spec, smallSample: v })

describe('two-way and unit fixed effects, clustered by unit', () => {
  for (const [name, spec, coefs] of [
    ['a1_fatalities_statefe_beertax', { design: 'did', treatmentColumn: 'beertax', fixedEffects: 'unit' }, { beertax: 'beertax' }],
    ['a1_fatalities_twfe_beertax', { design: 'did', treatmentColumn: 'beertax' }, { beertax: 'beertax' }],
    [
      'a1_fatalities_twfe_covariates',
      { design: 'did', treatmentColumn: 'beertax', covariates: ['drinkage', 'unemp', 'log_income'] },
      { beertax: 'beertax', drinkage: 'drinkage', unemp: 'unemp', log_income: 'log_income' },
    ],
  ] as const) {
    const c = loadCase(name)
    it(`${name} (source: its README)`, () => {
      checkSource(c.source)
      checkClustered((v) => estimate(c.panel, withVariant(spec, v)), c.expected, c.expected.coefficients, c.expected.fit, coefs)
    })
  }

  const a3 = loadCase('a3_synthetic_twfe')
  it('a3_synthetic_twfe (treated units and start; source: its README)', () => {
    checkSource(a3.source)
    const spec = { design: 'did', treated: a3.expected.treated_units, start: 11 }
    checkClustered((v) => estimate(a3.panel, withVariant(spec, v)), a3.expected, a3.expected.coefficients, a3.expected.fit, { d: 'treatment' })
    expect(unitsWith(a3.panel, 'd')).toEqual([...a3.expected.treated_units].sort())
  })
  it('a3_synthetic_twfe (the same through treatmentColumn "d")', () => {
    checkClustered((v) => estimate(a3.panel, withVariant({ design: 'did', treatmentColumn: 'd' }, v)), a3.expected, a3.expected.coefficients, a3.expected.fit, { d: 'd' })
  })
})

describe('2x2 difference-in-differences', () => {
  for (const [name, start] of [['a1_fatalities_2x2_drinkage21', 1988], ['a3_synthetic_2x2', 11]] as const) {
    const c = loadCase(name)
    const e = c.expected
    const treated = unitsWith(c.panel, 'treated')
    const spec = { design: 'did', did: { form: '2x2' }, treated, start }
    it(`${name} (source: its README)`, () => {
      checkSource(c.source)
      checkClustered((v) => estimate(c.panel, withVariant(spec, v)), e, e.coefficients, e.fit, { intercept: 'intercept', treated: 'treated', post: 'post', treated_x_post: 'treatment' })
      const r = estimate(c.panel, spec)
      const g = r.groupMeans!
      near(g.treatedPre, e.group_means.treated_pre, 'treated_pre')
      near(g.treatedPost, e.group_means.treated_post, 'treated_post')
      near(g.controlPre, e.group_means.control_pre, 'control_pre')
      near(g.controlPost, e.group_means.control_post, 'control_post')
      near(g.did, e.group_means.did, 'did')
      expect(g.nCells).toEqual({ treatedPre: e.group_means.n_cells.treated_pre, treatedPost: e.group_means.n_cells.treated_post, controlPre: e.group_means.n_cells.control_pre, controlPost: e.group_means.n_cells.control_post })
      near(r.effect.estimate, e.group_means.did, 'pooled interaction = cell-mean DiD')
      expect(treated).toEqual([...e.treated_units].sort())
    })
    it(`${name}, alt_models.twfe: the same rows with unit and period effects`, () => {
      const alt = e.alt_models.twfe
      checkClustered((v) => estimate(c.panel, withVariant({ design: 'did', treated, start }, v)), e, alt.coefficients, alt.fit, { treated_x_post: 'treatment' })
    })
  }
})

describe('event study', () => {
  for (const [name, eventWindow] of [
    ['a3_synthetic_event_study', { from: -10, to: 9, bin: false }],
    ['a3_synthetic_event_study_binned', { from: -5, to: 5, bin: true }],
  ] as const) {
    const c = loadCase(name)
    const e = c.expected
    const spec = { design: 'event_study', treated: e.treated_units, start: 11, eventWindow }
    const names = Object.fromEntries(e.spec.event_times.map((t: number) => [`rel_${t}`, `rel_${t}`]))
    it(`${name} (source: its README)`, () => {
      checkSource(c.source)
      checkClustered((v) => estimate(c.panel, withVariant(spec, v)), e, e.coefficients, e.fit, names)
      const r = estimate(c.panel, { ...spec, smallSample: 'full' })
      const ref = r.eventStudy!.find((p) => p.reference)!
      expect(ref.relTime).toBe(-1)
      expect(r.eventStudy!.map((p) => p.relTime)).toEqual([...e.spec.event_times, -1].sort((a: number, b: number) => a - b))
      if (eventWindow.bin) expect(r.eventStudy![0].bin).toBe('<=')
    })
    it(`${name}: joint Wald test of the leads, every covariance`, () => {
      const all: [string, Expected][] = [['full', e.tests.pretrend_wald], ...Object.entries(e.tests.pretrend_wald_variants as Record<string, Expected>).map(([k, v]): [string, Expected] => [{ CR0: 'none', CR1_G: 'clusters', CR1_Knested: 'nested', CR1_Kslopes: 'slopes', iid: 'iid' }[k]!, v])]
      expect(all.length).toBe(6)
      for (const [variant, x] of all) {
        const w = estimate(c.panel, withVariant(spec, variant)).preTrend!.wald!
        expect(w.terms).toEqual(e.tests.pretrend_wald.terms)
        near(w.chi2, x.wald_chi2, `${variant} chi2`)
        nearP(w.pChi2, x.chi2_p, `${variant} chi2 p`)
        near(w.F, x.F, `${variant} F`)
        expect([w.df1, w.df2]).toEqual([x.F_df1, x.F_df2])
        nearP(w.p, x.F_p, `${variant} F p`)
      }
    })
    if (e.tests.pretrend_slope_diff) {
      it(`${name}: pre-trend slope difference (${e.tests.pretrend_slope_diff.model})`, () => {
        const x = e.tests.pretrend_slope_diff.coefficients.treated_x_period
        near(x.estimate, e.tests.pretrend_slope_diff.gap_slope, 'balanced panel: equals the slope of the mean gap')
        for (const [ours, theirs] of clusterVariants) {
          const s = estimate(c.panel, { ...spec, smallSample: ours }).preTrend!.slopeDiff!
          near(s.estimate, x.estimate, 'slope diff')
          near(s.se, x.se_cluster_variants[theirs], `slope diff se ${theirs}`)
          expect(s.df).toBe(x.df)
          expect(s.nObs).toBe(e.tests.pretrend_slope_diff.fit.n_obs)
          if (ours === 'full') nearP(s.p, x.p_cluster, 'slope diff p')
        }
        const iid = estimate(c.panel, { ...spec, cluster: 'none' }).preTrend!.slopeDiff!
        near(iid.se, x.se_iid, 'slope diff se iid')
        nearP(iid.p, x.p_iid, 'slope diff p iid')
      })
    }
  }
})

describe('interrupted time series (segmented regression, Newey-West)', () => {
  const itsNames = (e: Expected) =>
    Object.fromEntries(Object.keys(e.coefficients).map((k) => [k, k === 'law' ? 'level' : k === 'time_since_law' ? 'slope' : k.replace(/^month_/, 'season_')]))
  for (const [name, outcomes] of [
    ['a2_seatbelts_its_drivers', [{ outcome: 'outcome' }, { outcome: 'drivers' }]],
    ['a2_seatbelts_its_log_driverskilled', [{ outcome: 'outcome' }, { outcome: 'DriversKilled', transform: 'log' }]],
  ] as const) {
    const c = loadCase(name)
    const e = c.expected
    for (const o of outcomes) {
      it(`${name} (${o.outcome}${'transform' in o ? ', log' : ''}; source: its README)`, () => {
        checkSource(c.source)
        const spec = (lag: number) => ({ design: 'its', ...o, its: { breaks: [e.intervention.first_post_period], seasonality: 'month', seasonColumn: 'month', hacLag: lag } })
        for (const lag of e.spec.hac_lags as number[]) {
          const r = estimate(c.panel, spec(lag))
          checkFit(r, e, e.fit, `${name} lag ${lag}`)
          expect(r.hacLag).toBe(lag)
          for (const [ref, ours] of Object.entries(itsNames(e))) {
            const x = e.coefficients[ref]
            const got = r.coefficients[ours]
            near(got.estimate, x.estimate, `${ours} estimate`)
            near(got.seIid, x.se_iid, `${ours} se_iid`)
            near(got.se, x.se_hac_variants[`NW_lag${lag}`], `${ours} se NW lag ${lag}`)
            expect(got.df).toBe(x.df_hac)
            if (lag === e.spec.hac_lag) {
              near(got.t, x.t_hac, `${ours} t_hac`)
              nearP(got.p, x.p_hac, `${ours} p_hac`)
              nearCi(got.ciLow, x.ci95_hac[0], got.se, `${ours} ci low`)
              nearCi(got.ciHigh, x.ci95_hac[1], got.se, `${ours} ci high`)
            }
          }
          near(r.durbinWatson, e.tests.durbin_watson.statistic, 'Durbin-Watson')
          // NW_lag12_adjust (times N/(N-K)) and the DW p-value (lmtest's method) are not computed by the engine.
          expect(r.effect.term).toBe('level')
          near(r.effect.estimate, e.coefficients.law.estimate, 'effect = level change')
        }
      })
    }
  }
})

describe('donor scores', () => {
  const c = loadCase('a4_synthetic_donors')
  const e = c.expected
  it('a4_synthetic_donors (source: its README)', () => {
    checkSource(c.source)
    const s = scoreDonors(c.panel, { design: 'did', treated: [e.spec.target_unit], start: 11, comparison: e.spec.candidates })
    expect(s.prePeriods).toEqual(e.spec.pre_periods.map(String))
    expect(s.rows.length).toBe(e.donor_scores.length)
    for (const x of e.donor_scores) {
      const row = s.rows.find((r) => r.unit === x.unit)!
      near(row.rmspe, x.rmspe_levels, `${x.unit} rmspe`)
      near(row.rmspeDemeaned, x.rmspe_demeaned, `${x.unit} rmspeDemeaned`)
      near(row.correlation, x.pearson_r, `${x.unit} correlation`)
      near(row.slopeDiff, x.slope_diff, `${x.unit} slopeDiff`)
      expect(row.ranks.rmspe).toBe(x.rank_rmspe_levels)
      expect(row.ranks.rmspeDemeaned).toBe(x.rank_rmspe_demeaned)
      expect(row.ranks.correlation).toBe(x.rank_pearson_r)
      expect(row.ranks.slopeDiff).toBe(x.rank_abs_slope_diff)
      expect(row.missingShare).toBe(0)
    }
    // ranking by demeaned RMSPE alone reproduces the reference's order
    const only = scoreDonors(c.panel, { design: 'did', treated: [e.spec.target_unit], start: 11, comparison: e.spec.candidates }, { rmspeDemeaned: 1 })
    expect(only.rows.map((r) => r.unit)).toEqual(e.donor_scores.map((x: Expected) => x.unit))
  })
})
