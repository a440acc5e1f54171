/** Series for the report's trend chart, from the exact rows a run used. Pure. */
import type { WorkbookPanelRow } from './build'

/** Mean outcome by period of the treated units and of the comparison units (missing cells skipped). */
export function groupSeries(rows: readonly WorkbookPanelRow[], treated: readonly string[], key: string) {
  const isTreated = new Set(treated)
  const periods = [...new Set(rows.map(r => String(r.period)))].sort()
  const at = new Map(periods.map((p, i) => [p, i]))
  const sums = { treated: new Float64Array(periods.length), comparison: new Float64Array(periods.length) }
  const counts = { treated: new Int32Array(periods.length), comparison: new Int32Array(periods.length) }
  for (const r of rows) {
    const v = r.values[key]
    if (v == null || !Number.isFinite(v)) continue
    const g = isTreated.has(r.unit) ? 'treated' : 'comparison'
    const t = at.get(String(r.period))!
    sums[g][t]! += v
    counts[g][t]! += 1
  }
  const mean = (g: 'treated' | 'comparison') => periods.map((_, t) => (counts[g][t] ? sums[g][t]! / counts[g][t]! : null))
  return { periods, treated: mean('treated'), comparison: mean('comparison') }
}
