/**
 * The fingerprint of a run's data: SHA-256 over the canonical text of the exact rows the
 * engine read (sorted by jurisdiction, then period; value keys sorted; numbers as JSON
 * writes them) followed by the spec with its keys sorted. Equal rows and spec give an
 * equal fingerprint whatever order they were read in; any changed value, added or dropped
 * row, or spec change gives a different one. Pure: no database, no framework.
 */
import { createHash } from 'node:crypto'

export interface StudyRow {
  jurisdiction: string
  period: string
  values: Record<string, number | null>
}

/** JSON with object keys sorted at every depth (arrays keep their order). */
export function canonicalJson(value: unknown): string {
  if (value === null || typeof value !== 'object') return JSON.stringify(value ?? null)
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(',')}]`
  const entries = Object.entries(value as Record<string, unknown>).filter(([, v]) => v !== undefined)
  entries.sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))
  return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonicalJson(v)}`).join(',')}}`
}

export function compareRows(a: Pick<StudyRow, 'jurisdiction' | 'period'>, b: Pick<StudyRow, 'jurisdiction' | 'period'>): number {
  if (a.jurisdiction !== b.jurisdiction) return a.jurisdiction < b.jurisdiction ? -1 : 1
  return a.period < b.period ? -1 : a.period > b.period ? 1 : 0
}

export function fingerprintRows(rows: readonly StudyRow[], spec?: unknown): string {
  const hash = createHash('sha256')
  const sorted = [...rows].sort(compareRows)
  for (const r of sorted) hash.update(`${JSON.stringify(r.jurisdiction)}\t${r.period}\t${canonicalJson(r.values)}\n`)
  hash.update(`spec\t${canonicalJson(spec ?? null)}\n`)
  return hash.digest('hex')
}
