/**
 * Within (fixed-effects) transformation: the residual of a column after projecting out unit
 * dummies, or unit and period dummies. By the Frisch-Waugh-Lovell theorem OLS on the
 * transformed columns gives the slopes and residuals of the full dummy-variable regression.
 *
 * - Unit effects only: subtract each unit's mean (exact).
 * - Two-way, balanced panel (every unit observed once in every period): x - mean_unit -
 *   mean_period + grand mean (exact).
 * - Two-way, unbalanced: alternating projections (von Neumann-Halperin; for fixed effects
 *   Guimaraes and Portugal 2010, Gaure 2013): sweep unit and period demeaning until the
 *   largest correction falls below 1e-13 of the column's scale. Simple two-way demeaning
 *   is not the two-way estimator when the panel is unbalanced.
 *
 * Also counts the connected components of the unit-period graph: the dummy design has rank
 * U + T - C (with the intercept), which fixes K_full for the small-sample corrections.
 *
 * Throws nothing; `converged` is false if 20,000 sweeps did not reach the tolerance.
 */

export interface AbsorbSpec {
  /** Dense unit index 0..nUnits-1 per row. */
  unit: Int32Array
  nUnits: number
  /** Dense period index 0..nPeriods-1 per row (two-way effects), or undefined (unit effects). */
  period?: Int32Array
  nPeriods?: number
}

export interface Absorber {
  /** Returns the transformed copy of v. */
  demean(v: Float64Array): Float64Array
  balanced: boolean
  /** Connected components of the unit-period graph (1 for unit effects only). */
  components: number
  /** Rank of the dummy design including the intercept: U, or U + T - C. */
  dummyRank: number
  /** False if some column hit the sweep limit before the tolerance. */
  converged: () => boolean
}

const AP_TOL = 1e-13
const AP_MAX_SWEEPS = 20_000

function groupMeansSubtract(v: Float64Array, g: Int32Array, counts: Float64Array, sums: Float64Array): number {
  sums.fill(0)
  for (let i = 0; i < v.length; i++) sums[g[i]] += v[i]
  let maxAdj = 0
  for (let j = 0; j < sums.length; j++) {
    sums[j] = counts[j] > 0 ? sums[j] / counts[j] : 0
    const a = Math.abs(sums[j])
    if (a > maxAdj) maxAdj = a
  }
  for (let i = 0; i < v.length; i++) v[i] -= sums[g[i]]
  return maxAdj
}

function countsOf(g: Int32Array, n: number): Float64Array {
  const c = new Float64Array(n)
  for (let i = 0; i < g.length; i++) c[g[i]]++
  return c
}

function connectedComponents(unit: Int32Array, nUnits: number, period: Int32Array, nPeriods: number): number {
  const parent = new Int32Array(nUnits + nPeriods)
  for (let i = 0; i < parent.length; i++) parent[i] = i
  const find = (x: number): number => {
    while (parent[x] !== x) {
      parent[x] = parent[parent[x]]
      x = parent[x]
    }
    return x
  }
  for (let i = 0; i < unit.length; i++) {
    const a = find(unit[i])
    const b = find(nUnits + period[i])
    if (a !== b) parent[a] = b
  }
  let c = 0
  for (let i = 0; i < parent.length; i++) if (find(i) === i) c++
  return c
}

export function makeAbsorber(spec: AbsorbSpec): Absorber {
  const { unit, nUnits } = spec
  const n = unit.length
  const unitCounts = countsOf(unit, nUnits)
  const unitSums = new Float64Array(nUnits)

  if (!spec.period) {
    return {
      demean(v) {
        const out = Float64Array.from(v)
        groupMeansSubtract(out, unit, unitCounts, unitSums)
        return out
      },
      balanced: true,
      components: 1,
      dummyRank: nUnits,
      converged: () => true,
    }
  }

  const period = spec.period
  const nPeriods = spec.nPeriods ?? 0
  const periodCounts = countsOf(period, nPeriods)
  const periodSums = new Float64Array(nPeriods)
  const components = connectedComponents(unit, nUnits, period, nPeriods)
  let balanced = n === nUnits * nPeriods
  if (balanced) {
    // Each unit must appear exactly nPeriods times and each period nUnits times; with unique
    // (unit, period) pairs (checked when the panel is built) that makes every cell present.
    for (let j = 0; j < nUnits && balanced; j++) if (unitCounts[j] !== nPeriods) balanced = false
    for (let j = 0; j < nPeriods && balanced; j++) if (periodCounts[j] !== nUnits) balanced = false
  }
  let allConverged = true

  return {
    demean(v) {
      const out = Float64Array.from(v)
      if (balanced) {
        let grand = 0
        for (let i = 0; i < n; i++) grand += out[i]
        grand /= n
        unitSums.fill(0)
        periodSums.fill(0)
        for (let i = 0; i < n; i++) {
          unitSums[unit[i]] += out[i]
          periodSums[period[i]] += out[i]
        }
        for (let j = 0; j < nUnits; j++) unitSums[j] /= nPeriods
        for (let j = 0; j < nPeriods; j++) periodSums[j] /= nUnits
        for (let i = 0; i < n; i++) out[i] = out[i] - unitSums[unit[i]] - periodSums[period[i]] + grand
        return out
      }
      let scale = 0
      for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(out[i]))
      const tol = AP_TOL * (scale > 0 ? scale : 1)
      let sweep = 0
      for (; sweep < AP_MAX_SWEEPS; sweep++) {
        const a = groupMeansSubtract(out, unit, unitCounts, unitSums)
        const b = groupMeansSubtract(out, period, periodCounts, periodSums)
        if (Math.max(a, b) < tol && sweep > 0) break
      }
      if (sweep === AP_MAX_SWEEPS) allConverged = false
      return out
    },
    balanced,
    components,
    dummyRank: nUnits + nPeriods - components,
    converged: () => allConverged,
  }
}
