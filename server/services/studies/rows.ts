/**
 * The rows of a study: for each jurisdiction and period, the outcome (as analysed: a rate
 * is outcome / denominator x 1,000) and every covariate, read through the panel store
 * (newest release per cell, or only the given releases to reproduce an older read).
 */
import { readPanelCells } from '../panel'
import type { RowSource, RunRelease } from '~~/db/jsonTypes'
import { compareRows, type StudyRow } from './fingerprint'

export interface StudyRows {
  rows: StudyRow[]
  /** Ids of the releases the rows came from (sorted). */
  releaseIds: number[]
  frequency: string
  releases: RunRelease[]
  /**
   * Reads of the newest releases only: which releases supplied each jurisdiction's cells (every
   * measure read). subsetStudyRows uses it to give a subset of the units without a new read.
   */
  releasesByUnit?: Map<string, number[]>
}

export const OUTCOME = 'outcome'
/** With RowSource.counts: the outcome measure as recorded (a count) and the denominator (the exposure). */
export const COUNT = 'count'
export const EXPOSURE = 'exposure'

export async function readStudyRows(src: RowSource, releaseIds: number[] = []): Promise<StudyRows> {
  const pool = usePool()
  const read = (measure: string) => readPanelCells(pool, { measure, units: src.units, from: src.from ?? undefined, to: src.to ?? undefined, release: releaseIds })
  const rate = src.transform === 'rate' && src.denominator
  const keys = [src.outcome, ...src.covariates, ...(rate ? [src.denominator!] : [])]
  const reads = await Promise.all(keys.map(read))
  const panels = reads.map(r => r.panel)
  const byCell = new Map<string, StudyRow>()
  const blank = () => {
    const v: Record<string, number | null> = { [OUTCOME]: null }
    for (const c of src.covariates) v[c] = null
    return v
  }
  const cell = (j: string, p: string) => {
    const key = `${j}\u0000${p}`
    let row = byCell.get(key)
    if (!row) byCell.set(key, (row = { jurisdiction: j, period: p, values: blank() }))
    return row
  }
  // the outcome decides which cells exist; covariates fill in where they have a value
  const outcome = panels[0]!
  const den = rate ? new Map(panels[panels.length - 1]!.rows.map(r => [`${r.jurisdiction}\u0000${r.period}`, r.value])) : null
  for (const r of outcome.rows) {
    const row = cell(r.jurisdiction, r.period)
    if (den) {
      const d = den.get(`${r.jurisdiction}\u0000${r.period}`)
      row.values[OUTCOME] = d !== undefined && d > 0 ? (r.value / d) * 1000 : null
      if (src.counts) {
        row.values[COUNT] = r.value
        row.values[EXPOSURE] = d !== undefined && d > 0 ? d : null
      }
    }
    else row.values[OUTCOME] = r.value
  }
  src.covariates.forEach((c, k) => {
    for (const r of panels[k + 1]!.rows) {
      const row = byCell.get(`${r.jurisdiction}\u0000${r.period}`)
      if (row) row.values[c] = r.value
    }
  })
  const rows = [...byCell.values()].sort(compareRows)
  const releases = new Map<number, StudyRows['releases'][number]>()
  for (const p of panels) for (const r of p.releases) releases.set(r.id, r)
  const ids = [...releases.keys()].sort((a, b) => a - b)
  let releasesByUnit: Map<string, number[]> | undefined
  if (reads.every(r => r.releasesByUnit)) {
    const merged = new Map<string, Set<number>>()
    for (const r of reads) {
      for (const [unit, used] of r.releasesByUnit!) {
        let set = merged.get(unit)
        if (!set) merged.set(unit, (set = new Set()))
        for (const id of used) set.add(id)
      }
    }
    releasesByUnit = new Map([...merged].map(([unit, set]) => [unit, [...set].sort((a, b) => a - b)]))
  }
  return { rows, releaseIds: ids, frequency: outcome.frequency, releases: ids.map(id => releases.get(id)!), releasesByUnit }
}

/**
 * The rows of some of the units of a newest-release read, exactly as readStudyRows would read
 * them with `units` (same measures and periods): the same rows in the same order, and the
 * releases that supplied those units' cells. Null when the read does not know its releases per
 * unit (a read of given releases).
 */
export function subsetStudyRows(data: StudyRows, units: readonly string[]): StudyRows | null {
  if (!data.releasesByUnit) return null
  const keep = new Set(units)
  const used = new Set<number>()
  const releasesByUnit = new Map<string, number[]>()
  for (const unit of keep) {
    const ids = data.releasesByUnit.get(unit)
    if (!ids) continue
    releasesByUnit.set(unit, ids)
    for (const id of ids) used.add(id)
  }
  return {
    rows: data.rows.filter(r => keep.has(r.jurisdiction)),
    releaseIds: data.releaseIds.filter(id => used.has(id)),
    frequency: data.frequency,
    releases: data.releases.filter(r => used.has(r.id)),
    releasesByUnit,
  }
}

/** Rows in the engine's typed-row form. */
export function engineRows(rows: readonly StudyRow[]) {
  return rows.map(r => ({ unit: r.jurisdiction, period: r.period, values: r.values }))
}
