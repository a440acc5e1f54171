/**
 * The rows of a study: for each jurisdiction and period, the outcome (as analysed: a rate
 * is outcome / denominator x 1,000) and every covariate, read through the panel store
 * (newest release per cell, or only the given releases to reproduce an older read).
 */
import { readPanel } from '../panel'
import type { RowSource, RunRelease } from '~~/db/jsonTypes'
import { compareRows, type StudyRow } from './fingerprint'

export interface StudyRows {
  rows: StudyRow[]
  /** Ids of the releases the rows came from (sorted). */
  releaseIds: number[]
  frequency: string
  releases: RunRelease[]
}

export const OUTCOME = 'outcome'
/** With RowSource.counts: the outcome measure as recorded (a count) and the denominator (the exposure). */
export const COUNT = 'count'
export const EXPOSURE = 'exposure'

export async function readStudyRows(src: RowSource, releaseIds: number[] = []): Promise<StudyRows> {
  const pool = usePool()
  const read = (measure: string) => readPanel(pool, { measure, units: src.units, from: src.from ?? undefined, to: src.to ?? undefined, release: releaseIds })
  const rate = src.transform === 'rate' && src.denominator
  const keys = [src.outcome, ...src.covariates, ...(rate ? [src.denominator!] : [])]
  const panels = await Promise.all(keys.map(read))
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
  return { rows, releaseIds: ids, frequency: outcome.frequency, releases: ids.map(id => releases.get(id)!) }
}

/** Rows in the engine's typed-row form. */
export function engineRows(rows: readonly StudyRow[]) {
  return rows.map(r => ({ unit: r.jurisdiction, period: r.period, values: r.values }))
}
