/**
 * The fingerprint of a run's data: SHA-256 over the canonical text of the exact rows the
 * engine read (sorted by jurisdiction, then period; value keys sorted; numbers as JSON
 * writes them) followed by the spec with its keys sorted. Equal rows and spec give an
 * equal fingerprint whatever order they were read in; any changed value, added or dropped
 * row, or spec change gives a different one. Pure: no database, no framework.
 */
import { createHash, type Hash } from 'node:crypto'

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

/**
 * canonicalJson() of a row's values, faster for the usual flat record of numbers and nulls:
 * the sorted key order and the quoted keys are worked out once per set of keys, and a
 * number is written as JSON writes it (String() for a finite number, null otherwise). Any
 * other value falls back to canonicalJson(), so the text is always the same.
 */
function valuesText(values: Record<string, number | null>, orders: Map<string, { keys: string[], quoted: string[] }>): string {
  const own = Object.keys(values)
  const id = own.join('\u0000')
  let order = orders.get(id)
  if (!order) {
    const keys = [...own].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0))
    orders.set(id, (order = { keys, quoted: keys.map(k => JSON.stringify(k)) }))
  }
  let out = ''
  for (let i = 0; i < order.keys.length; i++) {
    const v = values[order.keys[i]!]
    if (v === undefined) continue
    let text: string
    if (v === null) text = 'null'
    else if (typeof v === 'number') text = Number.isFinite(v) ? String(v) : 'null'
    else text = canonicalJson(v)
    out += `${out ? ',' : ''}${order.quoted[i]}:${text}`
  }
  return `{${out}}`
}

export function fingerprintRows(rows: readonly StudyRow[], spec?: unknown): string {
  return fingerprintWith(hashRows(rows), spec)
}

/**
 * The fingerprint from a hash of the rows (hashRows): a copy of it takes the spec, so one
 * hash of the rows serves every spec run on them.
 */
export function fingerprintWith(rowsHash: Hash, spec?: unknown): string {
  const hash = rowsHash.copy()
  hash.update(`spec\t${canonicalJson(spec ?? null)}\n`)
  return hash.digest('hex')
}

/** SHA-256 over the rows' canonical text (the first part of a fingerprint). */
export function hashRows(rows: readonly StudyRow[]): Hash {
  const hash = createHash('sha256')
  const sorted = [...rows].sort(compareRows)
  const orders = new Map<string, { keys: string[], quoted: string[] }>()
  let unit = ''
  let quotedUnit = ''
  const lines: string[] = []
  for (const r of sorted) {
    if (r.jurisdiction !== unit || !quotedUnit) quotedUnit = JSON.stringify((unit = r.jurisdiction))
    lines.push(`${quotedUnit}\t${r.period}\t${valuesText(r.values, orders)}\n`)
    if (lines.length === 512) hash.update(lines.splice(0).join(''))
  }
  if (lines.length) hash.update(lines.join(''))
  return hash
}
