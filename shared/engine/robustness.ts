/**
 * Result types of the robustness checks (server/engine/robustness): what a robustness run
 * stores and the Robustness step, the Review step and the workbook read. Free of node-only
 * imports (the browser reads these).
 */
import type { Design } from './spec'
import type { InferenceResult, Placebo } from './result'

export const ROBUSTNESS_KINDS = ['placebo_time', 'placebo_space', 'leave_one_out', 'pools'] as const
export type RobustnessKind = (typeof ROBUSTNESS_KINDS)[number]

export const ROBUSTNESS_LABELS: Record<RobustnessKind, string> = {
  placebo_time: 'Placebo in time',
  placebo_space: 'Placebo in space',
  leave_one_out: 'Leave one donor out',
  pools: 'Alternative pools',
}

/** One fake start date and the effect the same design finds there on pre-period data only. */
export interface FakeStart {
  start: string
  /** null when the design could not be estimated at this date (see note). */
  estimate: number | null
  note: string | null
}

export interface PlaceboTimeResult {
  kind: 'placebo_time'
  /** The actual effect as compared with the fakes (over the matched window when `window` is set). */
  actual: { start: string; estimate: number }
  /** The run's own effect (its whole window). */
  runEstimate?: number
  /** Periods either side of every start (actual and fakes) when windows are matched, else null. */
  window?: number | null
  /** Fake starts keep at least this many pre-period periods on each side. */
  minDistance: number
  prePeriods: number
  fakes: FakeStart[]
  /** Fakes with an estimate, and how many of them are at least as large as the actual effect (absolute values). */
  n: number
  atLeastAsLarge: number
  /** atLeastAsLarge / n, or null when no fake could be estimated. */
  share: number | null
  warnings: string[]
}

export interface PlaceboSpaceResult {
  kind: 'placebo_space'
  actual: number
  /** Whether the placebos were taken from the run itself or estimated here. */
  source: 'run' | 'estimated'
  placebos: Placebo[]
  n: number
  atLeastAsLarge: number
  share: number | null
  p: number
  pRatio: number | null
  pMin: number
  level: number
  ciLow: number | null
  ciHigh: number | null
  /** The inference block for the placebo strip (InferenceResult-shaped, placebo units). */
  inference: InferenceResult
  warnings: string[]
}

export interface LeaveOneOutRow {
  /** The donor left out. */
  unit: string
  estimate: number | null
  /** estimate - full estimate. */
  change: number | null
  note: string | null
}

export interface LeaveOneOutResult {
  kind: 'leave_one_out'
  full: number
  rows: LeaveOneOutRow[]
  min: number | null
  max: number | null
  /** Donors whose removal moves the estimate most, largest |change| first (at most 3). */
  mostInfluential: string[]
  warnings: string[]
}

/** A named comparison pool to estimate on. */
export interface NamedPool {
  name: string
  label: string
  units: string[]
  /** Estimate with this design instead of the run's (the weighted pool uses "synthetic"). */
  design?: Design
  /** Why this pool, in words. */
  note?: string
}

export interface PoolEstimate {
  name: string
  label: string
  units: string[]
  design: Design
  estimate: number | null
  ciLow: number | null
  ciHigh: number | null
  p: number | null
  level: number
  method: InferenceResult['method'] | null
  note: string | null
}

export interface PoolsResult {
  kind: 'pools'
  pools: PoolEstimate[]
  warnings: string[]
}

export type RobustnessResult = PlaceboTimeResult | PlaceboSpaceResult | LeaveOneOutResult | PoolsResult
