/**
 * Result types of the engine: the JSON `estimate` returns and the CLI prints, and the donor
 * score table `scoreDonors` returns. Field names are fixed by DESIGN.md ("Result"); keys that
 * do not apply to a design are null. Free of node-only imports (the browser reads these).
 */
import type { Design, SmallSample } from './spec'

/** One coefficient. `se` is the spec's covariance (clustered, HAC or iid); `seIid` the classical one. */
export interface Coefficient {
  estimate: number
  se: number
  seIid: number
  /** Degrees of freedom of the t distribution behind `p` (G-1 when clustered, N-K otherwise). */
  df: number
  t: number
  p: number
  ciLow: number
  ciHigh: number
}

/** The effect of interest: the treatment term (its: the first level change). */
export interface Effect extends Coefficient {
  term: string
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
  /** Covariance behind `se`: 'cluster' (CR1 family), 'hac' (Newey-West), 'hc1' or 'iid'. */
  vcov: 'cluster' | 'hac' | 'hc1' | 'iid'
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
  warnings: string[]
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
