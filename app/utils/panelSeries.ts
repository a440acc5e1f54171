/** Panel rows into chart series: one line per jurisdiction over the union of periods. */
export interface PanelRowLike { jurisdiction: string, period: string, value: number }

export function panelSeries(rows: PanelRowLike[]): { periods: string[], series: { jurisdiction: string, values: (number | null)[] }[] } {
  const periods = [...new Set(rows.map(r => r.period))].sort()
  const at = new Map(periods.map((p, i) => [p, i]))
  const byUnit = new Map<string, (number | null)[]>()
  for (const r of rows) {
    let values = byUnit.get(r.jurisdiction)
    if (!values) byUnit.set(r.jurisdiction, (values = new Array(periods.length).fill(null)))
    values[at.get(r.period)!] = r.value
  }
  return { periods, series: [...byUnit].map(([jurisdiction, values]) => ({ jurisdiction, values })) }
}

/** A palette of our own colours for lines, repeating after eight. */
export const SERIES_COLOURS = ['#b1502b', '#2d6b5f', '#1e2a2f', '#c9973a', '#6b4c8a', '#4f86a8', '#a3261c', '#7a8b3c']
