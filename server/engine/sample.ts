/**
 * From panel and spec to the rows a design uses: which units are treated and which compare
 * (comparison defaults to every unit never treated), each treated unit's start, the
 * optional window, rows with a missing value dropped (with a warning saying how many, by
 * column), the log transform, and dense unit and period indices for the fixed effects and
 * clusters.
 *
 * Throws EngineError 'unknown_unit', 'bad_period', 'invalid_spec' (start missing or naming a
 * unit that is not treated), 'non_positive_log' (naming the count and the first row), and
 * 'empty_panel' when no row is left.
 */
import type { Spec } from '../../shared/engine/spec'
import { EngineError, listSome } from './errors'
import { type Panel, periodOrdinal, unitIndices } from './panel'
import type { CovarianceRequest } from './regression'

export interface Roles {
  /** Panel unit indices of the treated units, in spec order. */
  treated: number[]
  comparison: number[]
  /** Per panel unit: 1 if treated. */
  isTreated: Uint8Array
  /** Per panel unit: 1 if the unit takes part (treated or comparison). */
  inSample: Uint8Array
  /** Per panel unit: ordinal of the first treated period, NaN for other units. */
  start: Float64Array
  /** The start shared by every treated unit, or null when starts differ or are absent. */
  commonStart: number | null
  /** Window as ordinal ranges, or null. */
  window: { pre: [number, number]; post: [number, number] } | null
}

export interface RoleOptions {
  requireTreated: boolean
  requireStart: boolean
}

export function resolveRoles(panel: Panel, spec: Spec, opts: RoleOptions): Roles {
  const nU = panel.units.length
  const treated = unitIndices(panel, spec.treated, 'treated')
  if (opts.requireTreated && treated.length === 0) {
    throw new EngineError('invalid_spec', `design "${spec.design}" needs at least one treated unit (spec.treated)`)
  }
  const isTreated = new Uint8Array(nU)
  for (const u of treated) isTreated[u] = 1
  let comparison: number[]
  if (spec.comparison) comparison = unitIndices(panel, spec.comparison, 'comparison')
  else comparison = treated.length || !spec.treatmentColumn ? [...Array(nU).keys()].filter((u) => !isTreated[u]) : [...Array(nU).keys()]
  const inSample = new Uint8Array(nU)
  for (const u of treated) inSample[u] = 1
  for (const u of comparison) inSample[u] = 1

  const window = spec.window
    ? {
        pre: [periodOrdinal(panel, spec.window.pre[0], 'window.pre'), periodOrdinal(panel, spec.window.pre[1], 'window.pre')] as [number, number],
        post: [periodOrdinal(panel, spec.window.post[0], 'window.post'), periodOrdinal(panel, spec.window.post[1], 'window.post')] as [number, number],
      }
    : null
  if (window) {
    for (const [name, r] of [['pre', window.pre], ['post', window.post]] as const) {
      if (r[0] > r[1]) throw new EngineError('invalid_spec', `window.${name}: "${spec.window![name][0]}" comes after "${spec.window![name][1]}"`)
    }
    if (window.pre[1] >= window.post[0]) throw new EngineError('invalid_spec', `window: the pre window must end before the post window starts`)
  }

  const start = new Float64Array(nU).fill(NaN)
  const s = spec.start
  if (s !== undefined && typeof s === 'object') {
    const keys = Object.keys(s)
    const notTreated = keys.filter((k) => !spec.treated.includes(k))
    if (notTreated.length) throw new EngineError('invalid_spec', `start names ${listSome(notTreated)}, which ${notTreated.length > 1 ? 'are' : 'is'} not in treated`)
    unitIndices(panel, keys, 'start')
    const missing = spec.treated.filter((u) => !(u in s))
    if (missing.length) throw new EngineError('invalid_spec', `start gives no period for treated unit${missing.length > 1 ? 's' : ''} ${listSome(missing)}`)
    treated.forEach((u, i) => (start[u] = periodOrdinal(panel, s[spec.treated[i]], `start for "${spec.treated[i]}"`)))
  } else {
    const value = s ?? (window ? spec.window!.post[0] : undefined)
    if (value !== undefined) {
      const o = periodOrdinal(panel, value, 'start')
      for (const u of treated) start[u] = o
    }
  }
  if (opts.requireStart && treated.length && treated.some((u) => Number.isNaN(start[u]))) {
    throw new EngineError('invalid_spec', `design "${spec.design}" needs the first treated period: set spec.start (one period, or a map unit -> period) or spec.window`)
  }
  let commonStart: number | null = null
  if (treated.length && treated.every((u) => start[u] === start[treated[0]]) && !Number.isNaN(start[treated[0]])) commonStart = start[treated[0]]
  return { treated, comparison, isTreated, inSample, start, commonStart, window }
}

export interface Sample {
  panel: Panel
  /** Panel row of each sample row. */
  rows: Int32Array
  n: number
  /** Dense unit index per row, and the panel unit of each dense index. */
  unit: Int32Array
  nUnits: number
  unitPanel: Int32Array
  /** Dense period index per row, and the ordinal of each dense index. */
  period: Int32Array
  nPeriods: number
  periodOrdinals: Float64Array
  /** Ordinal of each row's period. */
  ordinal: Float64Array
  /** The outcome after the spec's transform. */
  y: Float64Array
  column(name: string): Float64Array
}

export interface SampleOptions {
  /** Numeric columns besides the outcome that must be present in a row. */
  columns: string[]
  /** Extra row filter on panel rows. */
  keep?: (row: number) => boolean
}

export function selectSample(panel: Panel, spec: Spec, roles: Roles, opts: SampleOptions, warnings: string[]): Sample {
  const needed = [spec.outcome, ...opts.columns.filter((c) => c !== spec.outcome)]
  const cols = needed.map((c) => panel.columns[c])
  const w = roles.window
  const missingBy = new Array(needed.length).fill(0)
  let dropped = 0
  const keepRows: number[] = []
  for (let r = 0; r < panel.nRows; r++) {
    if (!roles.inSample[panel.unit[r]]) continue
    if (w) {
      const o = panel.periods[panel.period[r]].ordinal
      if (!((o >= w.pre[0] && o <= w.pre[1]) || (o >= w.post[0] && o <= w.post[1]))) continue
    }
    if (opts.keep && !opts.keep(r)) continue
    let miss = false
    for (let j = 0; j < cols.length; j++) {
      if (Number.isNaN(cols[j][r])) {
        missingBy[j]++
        miss = true
      }
    }
    if (miss) dropped++
    else keepRows.push(r)
  }
  if (dropped) {
    const detail = needed.map((c, j) => (missingBy[j] ? `${c}: ${missingBy[j]}` : '')).filter(Boolean).join(', ')
    warnings.push(`dropped ${dropped} row${dropped > 1 ? 's' : ''} with missing values (${detail})`)
  }
  if (keepRows.length === 0) throw new EngineError('empty_panel', `no rows left for design "${spec.design}" after selecting units${w ? ', the window' : ''} and dropping missing values`)
  const rows = Int32Array.from(keepRows)
  const n = rows.length

  const y = new Float64Array(n)
  const yCol = cols[0]
  let nonPositive = 0
  let firstBad = -1
  for (let i = 0; i < n; i++) {
    const v = yCol[rows[i]]
    if (spec.transform === 'log') {
      if (!(v > 0)) {
        nonPositive++
        if (firstBad < 0) firstBad = rows[i]
      }
      y[i] = Math.log(v)
    } else y[i] = v
  }
  if (nonPositive) {
    throw new EngineError(
      'non_positive_log',
      `transform "log": outcome "${spec.outcome}" has ${nonPositive} value${nonPositive > 1 ? 's' : ''} <= 0, which have no logarithm (first: unit "${panel.units[panel.unit[firstBad]]}", period ${panel.periods[panel.period[firstBad]].canonical}, value ${yCol[firstBad]}); use transform "level" or remove those rows`,
    )
  }

  const unitMap = new Int32Array(panel.units.length).fill(-1)
  const periodMap = new Int32Array(panel.periods.length).fill(-1)
  for (let i = 0; i < n; i++) {
    unitMap[panel.unit[rows[i]]] = 0
    periodMap[panel.period[rows[i]]] = 0
  }
  const unitPanel: number[] = []
  for (let u = 0; u < unitMap.length; u++) if (unitMap[u] === 0) unitMap[u] = unitPanel.push(u) - 1
  const periodOrdinals: number[] = []
  for (let p = 0; p < periodMap.length; p++) if (periodMap[p] === 0) periodMap[p] = periodOrdinals.push(panel.periods[p].ordinal) - 1
  const unit = new Int32Array(n)
  const period = new Int32Array(n)
  const ordinal = new Float64Array(n)
  for (let i = 0; i < n; i++) {
    unit[i] = unitMap[panel.unit[rows[i]]]
    period[i] = periodMap[panel.period[rows[i]]]
    ordinal[i] = panel.periods[panel.period[rows[i]]].ordinal
  }
  const cache = new Map<string, Float64Array>()
  return {
    panel,
    rows,
    n,
    unit,
    nUnits: unitPanel.length,
    unitPanel: Int32Array.from(unitPanel),
    period,
    nPeriods: periodOrdinals.length,
    periodOrdinals: Float64Array.from(periodOrdinals),
    ordinal,
    y,
    column(name) {
      let c = cache.get(name)
      if (!c) {
        const src = panel.columns[name]
        if (!src) throw new EngineError('unknown_column', `unknown column "${name}"`)
        c = new Float64Array(n)
        for (let i = 0; i < n; i++) c[i] = src[rows[i]]
        cache.set(name, c)
      }
      return c
    },
  }
}

/** 1 where the row's unit is treated and the period is on or after its start. */
export function treatmentIndicator(sample: Sample, roles: Roles): Float64Array {
  const d = new Float64Array(sample.n)
  for (let i = 0; i < sample.n; i++) {
    const u = sample.unitPanel[sample.unit[i]]
    d[i] = roles.isTreated[u] && sample.ordinal[i] >= roles.start[u] ? 1 : 0
  }
  return d
}

/** Checks that the treated units have rows before and on/after their start. */
export function requirePrePost(sample: Sample, roles: Roles, spec: Spec): void {
  let pre = 0
  let post = 0
  for (let i = 0; i < sample.n; i++) {
    const u = sample.unitPanel[sample.unit[i]]
    if (!roles.isTreated[u]) continue
    if (sample.ordinal[i] < roles.start[u]) pre++
    else post++
  }
  const when = roles.commonStart !== null ? ` (start ${sample.panel.periods.find((p) => p.ordinal === roles.commonStart)?.canonical ?? roles.commonStart})` : ''
  if (pre === 0) throw new EngineError('no_pre_periods', `no pre-periods: the treated units have no rows before their start${when}${spec.window ? ' within the window' : ''}`)
  if (post === 0) throw new EngineError('no_post_periods', `no post-periods: the treated units have no rows from their start on${when}${spec.window ? ' within the window' : ''}`)
}

/**
 * Cluster ids per sample row: the unit, or the value of spec.clusterColumn (a number per row,
 * e.g. a region code) made dense in ascending order of the values.
 */
export function clustersOf(spec: Spec, sample: Sample): { cluster: Int32Array; nClusters: number } {
  if (!spec.clusterColumn) return { cluster: sample.unit, nClusters: sample.nUnits }
  const values = sample.column(spec.clusterColumn)
  const distinct = [...new Set(values)].sort((a, b) => a - b)
  if (distinct.some((v) => Number.isNaN(v))) throw new EngineError('invalid_input', `clusterColumn "${spec.clusterColumn}" is empty in some rows used: give every row a cluster`)
  const index = new Map(distinct.map((v, i) => [v, i]))
  const cluster = new Int32Array(sample.n)
  for (let i = 0; i < sample.n; i++) cluster[i] = index.get(values[i])!
  return { cluster, nClusters: distinct.length }
}

/** Cluster by unit (or spec.clusterColumn), or classical errors for cluster "none". */
export function covarianceFor(spec: Spec, sample: Sample): CovarianceRequest {
  if (spec.cluster === 'none') return { kind: 'iid' }
  return { kind: 'cluster', ...clustersOf(spec, sample), smallSample: spec.smallSample }
}

/**
 * Cautions on cluster-robust inference. The thresholds are common practice, not a theorem:
 * with fewer than about 10 treated clusters, or fewer than about 30 clusters in all, CR1
 * errors tend to be too small and tests over-reject (Cameron, Gelbach and Miller 2008;
 * MacKinnon and Webb 2017).
 */
export function clusterWarnings(spec: Spec, nClusters: number, nTreatedClusters: number | null): string[] {
  if (spec.cluster === 'none') return ['errors are not clustered (cluster "none"): with serially correlated outcomes they are usually too small']
  const out: string[] = []
  if (nTreatedClusters !== null && nTreatedClusters < 10) {
    out.push(`only ${nTreatedClusters} treated cluster${nTreatedClusters === 1 ? '' : 's'}: cluster-robust errors may be unreliable (a wild cluster bootstrap or placebo inference is safer)`)
  } else if (nClusters < 30) {
    out.push(`only ${nClusters} clusters: cluster-robust errors may be unreliable`)
  }
  return out
}
