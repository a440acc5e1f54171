/**
 * Result types of the engine: the JSON `estimate` returns and the CLI prints, and the donor
 * score table `scoreDonors` returns. Field names are fixed by DESIGN.md ("Result"); keys that
 * do not apply to a design are null. Free of node-only imports (the browser reads these).
 */
import type { Design, SmallSample } from './spec'

/** One coefficient. `se` is the spec's covariance (clustered, HAC or iid); `seIid` the classical one. */
export interface Coefficient {
  estimate: number
  /** Count models (its.family poisson / quasipoisson): exp(estimate) and its Wald 95% bounds. */
  rateRatio?: number
  rateRatioLow?: number
  rateRatioHigh?: number
  se: number
  seIid: number
  /** Degrees of freedom of the t distribution behind `p` (G-1 when clustered, N-K otherwise). */
  df: number
  t: number
  p: number
  ciLow: number
  ciHigh: number
}

/**
 * The effect of interest: the treatment term (its: the first level change). `p`, `ciLow` and
 * `ciHigh` are the headline inference's (result.inference); `se`, `seIid`, `t` and `df` stay
 * the analytic ones. Null where no such number exists: no analytic SE for the weighted
 * comparison, no interval when too few placebos can bound it.
 */
export interface Effect extends Omit<Coefficient, 'se' | 'seIid' | 't' | 'df' | 'ciLow' | 'ciHigh'> {
  term: string
  se: number | null
  seIid: number | null
  t: number | null
  df: number | null
  ciLow: number | null
  ciHigh: number | null
}

export interface GroupMeans {
  treatedPre: number
  treatedPost: number
  controlPre: number
  controlPost: number
  /** (treatedPost - treatedPre) - (controlPost - controlPre). */
  did: number
  nCells: { treatedPre: number; treatedPost: number; controlPre: number; controlPost: number }
}

export interface EventStudyPoint {
  relTime: number
  estimate: number
  se: number
  ciLow: number
  ciHigh: number
  /** True for the omitted reference period (estimate 0 by construction). */
  reference: boolean
  /** For binned end points: the bin collects every earlier ('<=') or later ('>=') time. */
  bin: '<=' | '>=' | null
}

export interface WaldResult {
  /** Terms tested jointly (all = 0). */
  terms: string[]
  chi2: number
  pChi2: number
  /** F = chi2 / df1 against F(df1, df2); df2 = G-1 when clustered, N-K otherwise. */
  F: number
  df1: number
  df2: number
  p: number
}

export interface SlopeDiff {
  estimate: number
  se: number
  df: number
  p: number
  /** Rows used: pre-period rows of treated and comparison units. */
  nObs: number
}

export interface PreTrend {
  wald: WaldResult | null
  slopeDiff: SlopeDiff | null
  /**
   * The lead test by placebo units: p = share of placebo units (plus the treated) whose own
   * lead Wald statistic is at least the treated one's. Dependable where the F test is not
   * (few clusters); absent when no placebo run was made.
   */
  leadPermutation?: { p: number; nPlacebos: number; pMin: number } | null
}

/** One placebo: a comparison unit (or a set of them, codes joined by "+") playing the treated unit. */
export interface Placebo {
  unit: string
  estimate: number
  /** Post/pre RMSPE ratio of its gap (null where the design has no gap). */
  ratio: number | null
}

export interface InferenceResult {
  method: 'analytic' | 'permutation' | 'wild_bootstrap'
  /** One sentence: why this method (auto) or that the spec asked for it. */
  reason: string
  level: number
  p: number
  /** Bounds at `level`; null where the method cannot bound the effect (too few placebos). */
  ciLow: number | null
  ciHigh: number | null
  /** Placebo sets or bootstrap draws used (null for analytic). */
  draws: number | null
  enumerated: boolean | null
  weights: 'rademacher' | 'webb' | null
  seed: number | null
  /** Permutation: p-value of the post/pre RMSPE ratio, and the treated unit's own ratio. */
  pRatio: number | null
  ratio: number | null
  /** The analytic (model-based) p and 95% interval of the headline, kept for reference where another method leads. */
  analytic?: { p: number; ciLow: number; ciHigh: number } | null
  /** The smallest p-value the method can give: 1/(placebos + 1) or 1/draws. */
  pMin: number | null
  placebos: Placebo[] | null
  /**
   * The same method for every intervention term besides the headline (its level_k, did phase_k
   * and phase_k_vs_(k-1)), by placebo units: each term's p and interval from the placebos'
   * values of that term.
   */
  terms?: Record<string, { estimate: number; p: number; ciLow: number | null; ciHigh: number | null }> | null
  /**
   * Gap paths (permutation with one treated unit): the treated unit's and each placebo's. A run
   * the app stores keeps the placebos' paths apart (they are most of a result's size and only a
   * chart draws them): `placebos` is then empty and `placeboUnits` names them, in order; GET
   * /api/studies/:id/runs/:runId/gaps gives them back.
   */
  gaps: { periods: string[]; treated: (number | null)[]; placebos: { unit: string; gap: (number | null)[] }[]; placeboUnits?: string[] } | null
}

export interface SyntheticResult {
  /** Donor weights on the simplex, zeros included. */
  weights: Record<string, number>
  series: { period: string; treated: number; synthetic: number; gap: number }[]
  rmspePre: number
  rmspePost: number
  ratio: number
  /** Pre-period covariate means of the treated unit and its synthetic (when matched). */
  covariateBalance: { name: string; treated: number; synthetic: number }[] | null
}

export interface GroupTimeCell {
  cohort: string
  period: string
  relTime: number
  att: number
  se: number
  nCohort: number
  nComparison: number
  post: boolean
}

export interface StaggeredResult {
  comparison: 'never' | 'not_yet'
  groupTime: GroupTimeCell[]
  overall: { estimate: number; se: number }
  byRelTime: { relTime: number; estimate: number; se: number; bandLow?: number; bandHigh?: number }[]
  byCohort: { cohort: string; estimate: number; se: number }[]
}

export interface DecompositionRow {
  type: 'treated_vs_never' | 'earlier_vs_later' | 'later_vs_earlier'
  treated: string
  control: string
  estimate: number
  weight: number
}

export interface EstimateResult {
  design: Design
  nObs: number
  nUnits: number
  nPeriods: number
  /** Number of clusters G, or null when errors are not clustered. */
  nClusters: number | null
  /** The small-sample correction used for clustered errors, or null when not clustered. */
  smallSample: SmallSample | null
  /** Covariance behind `se`: 'cluster' (CR1 family), 'hac' (Newey-West), 'hc1', 'iid', or 'influence' (influence functions, staggered). */
  vcov: 'cluster' | 'hac' | 'hc1' | 'iid' | 'influence'
  /** Newey-West lag (its only). */
  hacLag: number | null
  effect: Effect
  coefficients: Record<string, Coefficient>
  groupMeans: GroupMeans | null
  eventStudy: EventStudyPoint[] | null
  preTrend: PreTrend | null
  /** Durbin-Watson statistic of the residuals (its only). */
  durbinWatson: number | null
  fit: {
    ssr: number
    sigma: number
    /** R-squared of the full dummy-variable regression. */
    rSquared: number
    /** Rank of the full design including every absorbed dummy (N - kFull = residual df). */
    kFull: number
    /** The K used in (N-1)/(N-K) when clustered, else null. */
    kSmallSample: number | null
  }
  /** Headline inference: the method behind effect.p, effect.ciLow and effect.ciHigh. */
  inference: InferenceResult | null
  synthetic: SyntheticResult | null
  staggered: StaggeredResult | null
  decomposition: DecompositionRow[] | null
  /** its: autocorrelated-error model used and its rho. */
  errors: { kind: 'newey_west' | 'ar1_ml' | 'ar1_reml' | 'prais_winsten'; rho: number | null } | null
  /** its with a comparison: which series the difference is taken against. */
  comparison: { kind: 'mean' | 'synthetic'; units: string[]; weights: Record<string, number> | null } | null
  /**
   * its: per period the modelled series (the difference series with a comparison), the fitted values and the
   * counterfactual (no level or slope changes), with its pointwise band at inference.level (x'b -/+ c sqrt(x'Vx) on the
   * linear predictor, back-transformed for count models; absent in runs stored before the band existed). Count models
   * with an exposure also carry it per period, so a reader can see counts as rates (per 1,000 or 100,000).
   */
  itsSeries?: { period: string; observed: number; fitted: number; counterfactual: number; counterfactualLow?: number | null; counterfactualHigh?: number | null; exposure?: number | null }[] | null
  /** its count models: Pearson dispersion chi2/(N-K) and deviance. */
  countFit: { dispersion: number; deviance: number } | null
  /** its: residual autocorrelations at lags 1..min(24, N/4) (OLS, whitened AR(1) or Pearson residuals by model). */
  residualAcf?: number[] | null
  /** Short technical sentences from the design; shared/delivery/warnings.ts gives each a plain message with this text as its detail. */
  warnings: string[]
}

/** A warning as a reader sees it: what it means in plain words, and the technical text one click away. */
export interface ResultWarning {
  message: string
  detail: string | null
}

export type DonorScoreName = 'rmspe' | 'rmspeDemeaned' | 'correlation' | 'slopeDiff' | 'covariateDistance'

export interface DonorExclusion {
  reason: string
  detail: string
}

export interface DonorScoreRow {
  unit: string
  /** sqrt(mean((y_target - y_donor)^2)) over the shared pre-periods. */
  rmspe: number | null
  /** The same after subtracting each series' own pre-period mean. */
  rmspeDemeaned: number | null
  /** Pearson correlation of the two pre-period series. */
  correlation: number | null
  /** OLS slope on the period index, target minus donor. */
  slopeDiff: number | null
  /** Standardised distance of pre-period covariate means (null without covariates). */
  covariateDistance: number | null
  /** Share of pre-periods where the donor has no usable value. */
  missingShare: number
  /** Rank by each score (1 = best, ties share the lowest rank). */
  ranks: Record<DonorScoreName, number | null>
  exclusions: DonorExclusion[]
  /** Composite rank: rank of the weighted mean of the score ranks. */
  rank: number | null
}

export interface DonorScores {
  /** The treated units whose (mean) series is the target. */
  target: string[]
  prePeriods: string[]
  weights: Partial<Record<DonorScoreName, number>>
  rows: DonorScoreRow[]
  warnings: string[]
}
