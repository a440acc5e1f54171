/**
 * The current panel of one measure (panel_cells: the newest release's value per cell) as
 * rows ordered by jurisdiction code, then period. The cells stream out of PostgreSQL with
 * COPY ... TO STDOUT in primary-key order (measure, jurisdiction id, period: an index range
 * scan, no sort), are parsed from COPY's text format here, and the rows of each jurisdiction
 * (one contiguous block) are put in the order of the codes as PostgreSQL sorts them. Codes
 * and periods are shared strings, one per jurisdiction and per distinct period.
 *
 * The codes come from the caller, read just before (with the measure); COPY is one statement,
 * one snapshot. A jurisdiction created in between whose cells the COPY sees gets its code read
 * afterwards (codes never change once given).
 */
import type pg from 'pg'
import { to as copyTo } from 'pg-copy-streams'
import type { PanelRow } from '../../shared/schemas/uploads'

export interface CurrentCells {
  rows: PanelRow[]
  /** Releases that supplied at least one cell, ascending. */
  releaseIds: number[]
  /** The same per jurisdiction code: which releases supplied its cells (ascending). */
  releasesByUnit: Map<string, number[]>
}

/** COPY text format: backslash escapes (only where a field holds one). */
function unescapeCopy(s: string): string {
  return s.replace(/\\(.)/g, (_, c: string) => (c === 't' ? '\t' : c === 'n' ? '\n' : c === 'r' ? '\r' : c === 'b' ? '\b' : c === 'f' ? '\f' : c === 'v' ? '\v' : c))
}

const POW10 = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22]

/**
 * A double as PostgreSQL writes it. Plain decimals of up to 15 significant digits: an integer
 * mantissa divided by a power of ten, one correctly rounded division (exact, Clinger 1990);
 * anything else (exponents, NaN, Infinity, more digits) through Number.
 */
export function decimal(text: string, from: number, to: number): number {
  let p = from
  const neg = text.charCodeAt(p) === 45
  if (neg) p++
  let m = 0
  let digits = 0
  let frac = 0
  let dot = false
  if (p >= to) return Number(text.slice(from, to))
  for (; p < to; p++) {
    const c = text.charCodeAt(p)
    if (c >= 48 && c <= 57) {
      m = m * 10 + (c - 48)
      if (m !== 0) digits++
      if (dot) frac++
    }
    else if (c === 46 && !dot) dot = true
    else return Number(text.slice(from, to))
  }
  if (digits > 15 || frac > 22) return Number(text.slice(from, to))
  const v = frac ? m / POW10[frac]! : m
  return neg ? -v : v
}

export async function readCurrentCells(pool: pg.Pool, measureId: number, jurisdictionIds: number[] | null, knownCodes: { id: number, code: string }[], from?: string, to?: string): Promise<CurrentCells> {
  const client = await pool.connect()
  let text: string
  try {
    // COPY takes no bind parameters: ids are integers, periods go in as quoted literals.
    const where = [`measure_id = ${Math.trunc(measureId)}`]
    if (jurisdictionIds) where.push(`jurisdiction_id IN (${jurisdictionIds.length ? jurisdictionIds.map(id => Math.trunc(id)).join(',') : 'NULL'})`)
    if (from) where.push(`period >= ${client.escapeLiteral(from)}`)
    if (to) where.push(`period <= ${client.escapeLiteral(to)}`)
    const chunks: Buffer[] = []
    const stream = client.query(copyTo(
      `COPY (SELECT jurisdiction_id, period, value, release_id FROM panel_cells WHERE ${where.join(' AND ')}
             ORDER BY measure_id, jurisdiction_id, period) TO STDOUT`))
    for await (const chunk of stream) chunks.push(chunk as Buffer)
    text = Buffer.concat(chunks).toString('utf8')
  }
  finally {
    client.release()
  }
  let codes = knownCodes

  // Parse: one line "jurisdiction_id \t period \t value \t release_id" per cell. Integers are
  // read digit by digit; a period equal to the one at the same position in the previous
  // jurisdiction's block (the usual case) is reused without cutting a new string.
  let lines = 0
  for (let k = text.indexOf('\n'); k >= 0; k = text.indexOf('\n', k + 1)) lines++
  const jid = new Int32Array(lines)
  const value = new Float64Array(lines)
  const period: string[] = new Array(lines)
  const periodOf = new Map<string, string>()
  const releases = new Set<number>()
  // releases per jurisdiction id (a cell's release usually equals the one before it)
  const unitReleases = new Map<number, Set<number>>()
  let current: Set<number> | undefined
  let lastRelease = -1
  let previousBlock: string[] = []
  let block: string[] = []
  let n = 0
  const int = (from: number, to: number) => {
    let v = 0
    for (let k = from; k < to; k++) v = v * 10 + (text.charCodeAt(k) - 48)
    return v
  }
  for (let p = 0; p < text.length && n < lines;) {
    const t1 = text.indexOf('\t', p)
    const t2 = text.indexOf('\t', t1 + 1)
    const t3 = text.indexOf('\t', t2 + 1)
    const nl = text.indexOf('\n', t3 + 1)
    jid[n] = int(p, t1)
    if (n > 0 && jid[n] !== jid[n - 1]) {
      previousBlock = block
      block = []
    }
    if (n === 0 || jid[n] !== jid[n - 1]) {
      unitReleases.set(jid[n]!, (current = new Set()))
      lastRelease = -1
    }
    const guess = previousBlock[block.length]
    let per: string
    if (guess !== undefined && guess.length === t2 - t1 - 1 && text.startsWith(guess, t1 + 1)) per = guess
    else {
      const rawPeriod = text.slice(t1 + 1, t2)
      let known = periodOf.get(rawPeriod)
      if (known === undefined) periodOf.set(rawPeriod, (known = rawPeriod.includes('\\') ? unescapeCopy(rawPeriod) : rawPeriod))
      per = known
    }
    block.push(per)
    period[n] = per
    value[n] = decimal(text, t2 + 1, t3)
    const release = int(t3 + 1, nl)
    if (release !== lastRelease) {
      releases.add(release)
      current!.add(release)
      lastRelease = release
    }
    n++
    p = nl + 1
  }

  // Blocks of rows per jurisdiction (contiguous: rows come ordered by jurisdiction id).
  let rank = new Map<number, number>()
  codes.forEach((c, k) => rank.set(c.id, k))
  // a jurisdiction created after the codes were read (with cells imported since): read its code
  // (codes never change once given)
  const unnamed = [...unitReleases.keys()].filter(id => !rank.has(id))
  if (unnamed.length) {
    const { rows: more } = await pool.query<{ id: number, code: string }>('SELECT id, code FROM jurisdictions WHERE id = ANY($1::int[])', [unnamed])
    codes = [...codes, ...more].sort((a, b) => (a.code < b.code ? -1 : a.code > b.code ? 1 : 0))
    rank = new Map()
    codes.forEach((c, k) => rank.set(c.id, k))
  }
  const blocks: { start: number, end: number, rank: number, code: string }[] = []
  for (let i = 0; i < n;) {
    let j = i + 1
    while (j < n && jid[j] === jid[i]) j++
    const k = rank.get(jid[i]!)
    // a jurisdiction with cells has a code (a cell refers to it); a missing one sorts last
    blocks.push({ start: i, end: j, rank: k ?? Number.MAX_SAFE_INTEGER, code: k === undefined ? String(jid[i]) : codes[k]!.code })
    i = j
  }
  blocks.sort((a, b) => a.rank - b.rank)
  const rows: PanelRow[] = new Array(n)
  const releasesByUnit = new Map<string, number[]>()
  let r = 0
  for (const b of blocks) {
    for (let i = b.start; i < b.end; i++) rows[r++] = { jurisdiction: b.code, period: period[i]!, value: value[i]! }
    releasesByUnit.set(b.code, [...unitReleases.get(jid[b.start]!)!].sort((x, y) => x - y))
  }
  return { rows, releaseIds: [...releases].sort((a, b) => a - b), releasesByUnit }
}
