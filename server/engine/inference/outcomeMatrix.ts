/**
 * The outcome as a dense unit x period matrix (after the spec's transform, inside the spec's
 * window), for placebo gaps and the fast placebo path. NaN marks a missing cell; `balanced`
 * says there is none. Pure; throws nothing (a non-positive value under the log transform
 * becomes NaN: the design itself refuses such data before inference runs).
 */
import type { Spec } from '../../../shared/engine/spec'
import type { Panel } from '../panel'
import type { Roles } from '../sample'

export interface OutcomeMatrix {
  /** Panel unit index of each matrix row. */
  units: number[]
  /** Position of a panel unit in `units`, -1 if absent. */
  rowOf: Int32Array
  /** Panel period indices of the columns, in time order. */
  periods: number[]
  ordinals: Float64Array
  nT: number
  /** y[r * nT + t]. */
  y: Float64Array
  balanced: boolean
}

export function outcomeMatrix(panel: Panel, spec: Spec, roles: Roles, units: number[]): OutcomeMatrix {
  const w = roles.window
  const inWindow = (o: number) => !w || (o >= w.pre[0] && o <= w.pre[1]) || (o >= w.post[0] && o <= w.post[1])
  const periods: number[] = []
  const colOf = new Int32Array(panel.periods.length).fill(-1)
  panel.periods.forEach((p, i) => {
    if (inWindow(p.ordinal)) colOf[i] = periods.push(i) - 1
  })
  const nT = periods.length
  const rowOf = new Int32Array(panel.units.length).fill(-1)
  units.forEach((u, r) => (rowOf[u] = r))
  const y = new Float64Array(units.length * nT).fill(NaN)
  const col = panel.columns[spec.outcome]
  for (let i = 0; i < panel.nRows; i++) {
    const r = rowOf[panel.unit[i]]
    const t = colOf[panel.period[i]]
    if (r < 0 || t < 0) continue
    const v = col[i]
    y[r * nT + t] = spec.transform === 'log' ? (v > 0 ? Math.log(v) : NaN) : v
  }
  let balanced = true
  for (let k = 0; k < y.length && balanced; k++) if (Number.isNaN(y[k])) balanced = false
  return { units, rowOf, periods, ordinals: Float64Array.from(periods.map((p) => panel.periods[p].ordinal)), nT, y, balanced }
}

/** Per-period mean over matrix rows, skipping missing cells (NaN where every row misses). */
export function rowMean(m: OutcomeMatrix, rows: number[]): Float64Array {
  const out = new Float64Array(m.nT)
  for (let t = 0; t < m.nT; t++) {
    let s = 0
    let c = 0
    for (const r of rows) {
      const v = m.y[r * m.nT + t]
      if (!Number.isNaN(v)) {
        s += v
        c++
      }
    }
    out[t] = c ? s / c : NaN
  }
  return out
}

/** Gap of a set of units against a pool: mean of the set minus mean of the pool, per period. */
export function gapOf(m: OutcomeMatrix, set: number[], pool: number[]): Float64Array {
  const a = rowMean(m, set)
  const b = rowMean(m, pool)
  for (let t = 0; t < m.nT; t++) a[t] -= b[t]
  return a
}
