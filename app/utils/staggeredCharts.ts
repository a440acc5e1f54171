/**
 * Series for staggered adoption (group-time effects, Callaway and Sant'Anna 2021) and for the
 * decomposition of a two-way estimate into its two-by-two comparisons (Goodman-Bacon 2021):
 * the event-time aggregate with its simultaneous band, one line per adoption cohort, the
 * comparisons by kind, and the share of weight the already-treated comparisons carry.
 * Pure: data only, every function safe on empty arrays.
 */
import type { DecompositionRow, GroupTimeCell, StaggeredResult } from '#shared/engine/result'
import { DECOMPOSITION_LABELS } from '#shared/delivery/labels'
import { comparePeriods } from '#shared/utils/periods'

export type DecompositionType = DecompositionRow['type']
export const DECOMPOSITION_TYPES: readonly DecompositionType[] = ['treated_vs_never', 'earlier_vs_later', 'later_vs_earlier']

/** The base period of every cohort (g - 1): its effects are 0 by construction. */
export const REFERENCE_REL_TIME = -1

/** Periods (canonical text) in time order; text order where they cannot be read as periods of one kind. */
export function periodOrder(a: string, b: string): number {
  try {
    return comparePeriods(a, b)
  }
  catch {
    return a < b ? -1 : a > b ? 1 : 0
  }
}

export interface EventTimeSeries {
  relTimes: number[]
  labels: string[]
  estimate: number[]
  se: number[]
  /** Simultaneous band; null where the run has none for that relative time. */
  low: (number | null)[]
  high: (number | null)[]
  /** Position of the reference period -1, or -1 when it is not among the points. */
  referenceIndex: number
  /** Position of the first period of adoption (relative time 0), or -1. */
  adoptionIndex: number
  hasBand: boolean
}

/** The event-time aggregate theta(e) in relative-time order. */
export function eventTimeSeries(points: StaggeredResult['byRelTime'] | null | undefined): EventTimeSeries {
  const list = [...(points ?? [])].sort((a, b) => a.relTime - b.relTime)
  const band = (v: number | undefined) => (v === undefined || !Number.isFinite(v) ? null : v)
  const low = list.map(p => band(p.bandLow))
  const high = list.map(p => band(p.bandHigh))
  return {
    relTimes: list.map(p => p.relTime),
    labels: list.map(p => String(p.relTime)),
    estimate: list.map(p => p.estimate),
    se: list.map(p => p.se),
    low,
    high,
    referenceIndex: list.findIndex(p => p.relTime === REFERENCE_REL_TIME),
    adoptionIndex: list.findIndex(p => p.relTime === 0),
    hasBand: low.some((v, i) => v !== null && high[i] !== null),
  }
}

export type GroupTimeAxis = 'relTime' | 'period'

export interface CohortLine {
  cohort: string
  /** "Adopted 2006 (3 units)". */
  label: string
  units: number
  /** ATT(g, t) at each label of the axis; null where the cohort has no cell there. */
  values: (number | null)[]
  se: (number | null)[]
  /** Whether each point is after adoption (t >= g); false where there is no cell. */
  post: boolean[]
}

/** "Adopted 2006 (3 units)": the cohort named by its adoption period. */
export function cohortLabel(cohort: string, units: number): string {
  return `Adopted ${cohort} (${units} unit${units === 1 ? '' : 's'})`
}

/**
 * ATT(g, t) as one line per cohort, cohorts in adoption order, over relative time (e = t - g,
 * every cohort's -1 on the same spot) or over calendar periods.
 */
export function cohortLines(cells: readonly GroupTimeCell[] | null | undefined, axis: GroupTimeAxis = 'relTime'): { labels: string[], lines: CohortLine[] } {
  const list = cells ?? []
  const keyOf = (c: GroupTimeCell) => (axis === 'relTime' ? String(c.relTime) : c.period)
  const keys = axis === 'relTime'
    ? [...new Set(list.map(c => c.relTime))].sort((a, b) => a - b).map(String)
    : [...new Set(list.map(c => c.period))].sort(periodOrder)
  const position = new Map(keys.map((k, i) => [k, i]))
  const cohorts = [...new Set(list.map(c => c.cohort))].sort(periodOrder)
  const lines = cohorts.map((cohort) => {
    const own = list.filter(c => c.cohort === cohort)
    const values: (number | null)[] = keys.map(() => null)
    const se: (number | null)[] = keys.map(() => null)
    const post = keys.map(() => false)
    for (const c of own) {
      const i = position.get(keyOf(c))!
      values[i] = c.att
      se[i] = c.se
      post[i] = c.post
    }
    const units = own.reduce((m, c) => Math.max(m, c.nCohort), 0)
    return { cohort, label: cohortLabel(cohort, units), units, values, se, post }
  })
  return { labels: keys, lines }
}

/** Cohort-level effects in adoption order, each with its cohort's size from the cells. */
export function cohortRows(staggered: Pick<StaggeredResult, 'byCohort' | 'groupTime'> | null | undefined): { cohort: string, units: number, estimate: number, se: number }[] {
  if (!staggered) return []
  const units = new Map<string, number>()
  for (const c of staggered.groupTime) units.set(c.cohort, Math.max(units.get(c.cohort) ?? 0, c.nCohort))
  return [...staggered.byCohort].sort((a, b) => periodOrder(a.cohort, b.cohort)).map(c => ({ ...c, units: units.get(c.cohort) ?? 0 }))
}

export interface DecompositionPoint { x: number, y: number, label: string }

/** Each two-by-two comparison as a point (weight, estimate), grouped by kind; kinds without rows are left out. */
export function decompositionGroups(rows: readonly DecompositionRow[] | null | undefined): { type: DecompositionType, label: string, points: DecompositionPoint[] }[] {
  const list = rows ?? []
  return DECOMPOSITION_TYPES.map(type => ({
    type,
    label: DECOMPOSITION_LABELS[type],
    points: list.filter(r => r.type === type).map(r => ({ x: r.weight, y: r.estimate, label: `${r.treated} against ${r.control === 'never' ? 'never treated' : r.control}` })),
  })).filter(g => g.points.length > 0)
}

export interface DecompositionSummary {
  /** Sum of the weights (1 when the decomposition is complete). */
  weightSum: number
  /** Sum of weight x estimate: the two-way estimate. */
  weightedSum: number
  byType: Record<DecompositionType, { count: number, weight: number, /** Weight-weighted mean estimate; null without rows. */ estimate: number | null }>
  /** Share of the weight on comparisons whose comparison units are already treated. */
  alreadyTreatedShare: number
}

export function decompositionSummary(rows: readonly DecompositionRow[] | null | undefined): DecompositionSummary {
  const list = rows ?? []
  const byType = Object.fromEntries(DECOMPOSITION_TYPES.map((type) => {
    const own = list.filter(r => r.type === type)
    const weight = own.reduce((s, r) => s + r.weight, 0)
    const estimate = own.length && weight > 0 ? own.reduce((s, r) => s + r.weight * r.estimate, 0) / weight : null
    return [type, { count: own.length, weight, estimate }]
  })) as DecompositionSummary['byType']
  const weightSum = list.reduce((s, r) => s + r.weight, 0)
  return {
    weightSum,
    weightedSum: list.reduce((s, r) => s + r.weight * r.estimate, 0),
    byType,
    alreadyTreatedShare: weightSum > 0 ? byType.later_vs_earlier.weight / weightSum : 0,
  }
}

const pct = (v: number) => `${(v * 100).toFixed(1)}%`
const num = (v: number) => {
  const text = v.toFixed(3)
  return /^-0\.?0*$/.test(text) ? text.slice(1) : text.replace(/^-/, '−')
}

/** One sentence on how much weight the already-treated comparisons carry. */
export function decompositionCaption(rows: readonly DecompositionRow[] | null | undefined): string {
  if (!rows?.length) return 'No two-by-two comparisons to show.'
  const s = decompositionSummary(rows)
  const late = s.byType.later_vs_earlier
  const head = `The two-way estimate ${num(s.weightedSum)} is the weighted sum of ${rows.length} two-by-two comparison${rows.length === 1 ? '' : 's'}.`
  if (late.count === 0 || late.weight <= 0) return `${head} None of them uses already-treated units as the comparison.`
  return `${head} Comparisons against already-treated units carry ${pct(s.alreadyTreatedShare)} of the weight (${late.count} comparison${late.count === 1 ? '' : 's'}, weighted estimate ${num(late.estimate!)}); when effects grow or fade over time they can pull the two-way estimate away from any average effect.`
}
