/**
 * Long-format CSV text read straight into typed arrays, without an object per row: one
 * pass records where every field starts and ends (Int32Array offsets into the text), and a
 * column is turned into numbers (Float64Array) or texts only when the panel asks for it.
 * The panel builder (panel.ts) takes the table as `{ table }`; units and periods become
 * Int32Array codes there, as for every other input.
 *
 * The format is RFC 4180 as spreadsheet programs write it: comma-separated, a header row,
 * fields optionally in double quotes ("" for a quote inside), lines ending in LF or CRLF
 * (CR alone when the file has no LF), an optional byte-order mark. Lines that are empty or
 * hold only blanks and commas are skipped. Numbers read as readNumber (panel.ts) reads them;
 * plain decimals of up to 15 significant digits take an exact fast path (an integer mantissa
 * divided by a power of ten is one correctly rounded IEEE division, Clinger 1990).
 *
 * Throws EngineError 'invalid_input' for an empty file, a missing or repeated header name,
 * a malformed quoted field, or a row whose number of fields differs from the header (naming
 * the line).
 */
import { EngineError } from './errors'
import { readNumber } from './readNumber'

export interface CsvTable {
  kind: 'csv_table'
  text: string
  header: string[]
  nRows: number
  /** Start and end offsets of each field, row-major: row i, column j at i * header.length + j. */
  start: Int32Array
  end: Int32Array
  /** 1 where a field was quoted (its text holds "" for each quote). */
  quoted: Uint8Array
  /** File line (1-based) on which each row starts. */
  line: Int32Array
}

const COMMA = 44
const QUOTE = 34
const LF = 10
const CR = 13
const SPACE = 32
const TAB = 9

const isBlank = (c: number) => c === SPACE || c === TAB

/** The text of row i, column j (quotes removed). */
export function fieldText(t: CsvTable, i: number, j: number): string {
  const f = i * t.header.length + j
  const s = t.text.slice(t.start[f], t.end[f])
  return t.quoted[f] ? s.replace(/""/g, '"') : s
}

export function tableFromCsv(input: string): { table: CsvTable } {
  const text = input.charCodeAt(0) === 0xfeff ? input.slice(1) : input
  const len = text.length
  const crOnly = text.indexOf('\n') < 0 && text.indexOf('\r') >= 0
  const EOL = crOnly ? CR : LF
  // Field scratch of one row; grows for a row with more fields than expected.
  let cap = 64
  let fs = new Int32Array(cap)
  let fe = new Int32Array(cap)
  let fq = new Uint8Array(cap)
  let pos = 0
  let lineNo = 1

  const fail = (line: number, message: string): never => {
    throw new EngineError('invalid_input', `CSV line ${line}: ${message}`)
  }

  /** Reads one row from `pos`; returns its field count and moves `pos` past its line end. */
  const readRow = (): number => {
    const rowLine = lineNo
    let n = 0
    for (;;) {
      if (n === cap) {
        cap *= 2
        const s2 = new Int32Array(cap)
        s2.set(fs)
        fs = s2
        const e2 = new Int32Array(cap)
        e2.set(fe)
        fe = e2
        const q2 = new Uint8Array(cap)
        q2.set(fq)
        fq = q2
      }
      let c = pos < len ? text.charCodeAt(pos) : -1
      if (c === QUOTE) {
        const open = pos + 1
        let p = open
        for (;;) {
          const q = text.indexOf('"', p)
          if (q < 0) fail(rowLine, 'Quoted field unterminated')
          for (let k = p; k < q; k++) if (text.charCodeAt(k) === LF) lineNo++
          if (text.charCodeAt(q + 1) === QUOTE) {
            p = q + 2
            continue
          }
          fs[n] = open
          fe[n] = q
          fq[n] = 1
          p = q + 1
          while (p < len && isBlank(text.charCodeAt(p))) p++
          c = p < len ? text.charCodeAt(p) : -1
          if (c !== COMMA && c !== EOL && c !== -1 && !(c === CR && text.charCodeAt(p + 1) === LF)) {
            fail(rowLine, 'Trailing quote on quoted field is malformed')
          }
          pos = p
          break
        }
      } else {
        let p = pos
        while (p < len) {
          c = text.charCodeAt(p)
          if (c === COMMA || c === EOL) break
          if (c === CR && text.charCodeAt(p + 1) === LF) break
          p++
        }
        fs[n] = pos
        fe[n] = p
        fq[n] = 0
        pos = p
        c = p < len ? c : -1
      }
      n++
      if (c === COMMA) {
        pos++
        continue
      }
      if (c === CR && !crOnly) pos++ // CRLF
      if (c !== -1) pos++
      lineNo++
      return n
    }
  }

  const blankRow = (n: number): boolean => {
    for (let f = 0; f < n; f++) for (let k = fs[f]; k < fe[f]; k++) if (!isBlank(text.charCodeAt(k))) return false
    return true
  }

  // header: the first line that is not blank
  let headerFields = 0
  while (pos < len) {
    headerFields = readRow()
    if (!blankRow(headerFields)) break
    headerFields = 0
  }
  if (headerFields === 0) throw new EngineError('invalid_input', 'the CSV file is empty')
  const header: string[] = []
  for (let f = 0; f < headerFields; f++) {
    const s = text.slice(fs[f], fe[f])
    header.push((fq[f] ? s.replace(/""/g, '"') : s).trim())
  }
  const blank = header.findIndex((h) => h === '')
  if (blank >= 0) throw new EngineError('invalid_input', `CSV header: column ${blank + 1} has no name`)
  const dup = header.find((h, i) => header.indexOf(h) !== i)
  if (dup !== undefined) throw new EngineError('invalid_input', `CSV header: column "${dup}" appears twice`)

  // rows: at most one per remaining line
  const k = header.length
  let maxRows = 1
  for (let p = text.indexOf(crOnly ? '\r' : '\n', pos); p >= 0; p = text.indexOf(crOnly ? '\r' : '\n', p + 1)) maxRows++
  const start = new Int32Array(maxRows * k)
  const end = new Int32Array(maxRows * k)
  const quoted = new Uint8Array(maxRows * k)
  const line = new Int32Array(maxRows)
  let nRows = 0
  while (pos < len) {
    const rowLine = lineNo
    const n = readRow()
    if (blankRow(n)) continue
    if (n !== k) fail(rowLine, `${n} fields, but the header has ${k}`)
    const base = nRows * k
    for (let f = 0; f < k; f++) {
      start[base + f] = fs[f]
      end[base + f] = fe[f]
      quoted[base + f] = fq[f]
    }
    line[nRows++] = rowLine
  }
  return {
    table: {
      kind: 'csv_table',
      text,
      header,
      nRows,
      start: start.subarray(0, nRows * k),
      end: end.subarray(0, nRows * k),
      quoted: quoted.subarray(0, nRows * k),
      line: line.subarray(0, nRows),
    },
  }
}

const POW10 = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22]

/**
 * Column j as numbers: NaN for a missing cell, and `bad` = 1 where a cell is not a number
 * (the caller names it). Same reading as readNumber in panel.ts.
 */
export function tableNumbers(t: CsvTable, j: number): { values: Float64Array; bad: Uint8Array | null } {
  const { text, start, end, quoted } = t
  const k = t.header.length
  const values = new Float64Array(t.nRows)
  let bad: Uint8Array | null = null
  for (let i = 0; i < t.nRows; i++) {
    const f = i * k + j
    let p = start[f]
    const e = end[f]
    // fast path: [+-]digits[.digits], at most 15 significant digits, nothing else
    let neg = false
    let c = p < e ? text.charCodeAt(p) : -1
    if (c === 45 || c === 43) {
      neg = c === 45
      p++
    }
    let m = 0
    let digits = 0
    let frac = 0
    let seenDot = false
    let ok = p < e && !quoted[f]
    for (; ok && p < e; p++) {
      c = text.charCodeAt(p)
      if (c >= 48 && c <= 57) {
        m = m * 10 + (c - 48)
        if (m !== 0) digits++
        if (seenDot) frac++
      } else if (c === 46 && !seenDot) seenDot = true
      else ok = false
    }
    if (ok && digits <= 15 && frac <= 22 && (digits > 0 || m === 0) && !(seenDot && e - start[f] === 1 + (neg || text.charCodeAt(start[f]) === 43 ? 1 : 0))) {
      const v = frac ? m / POW10[frac] : m
      values[i] = neg ? -v : v
      continue
    }
    const v = readNumber(fieldText(t, i, j))
    if (v === undefined) {
      bad ??= new Uint8Array(t.nRows)
      bad[i] = 1
      values[i] = NaN
    } else values[i] = v
  }
  return { values, bad }
}

/**
 * Column j dictionary-coded without cutting a string per row: codes[i] indexes `texts`, the
 * distinct field texts in order of first appearance. Fields are hashed (FNV-1a) and compared
 * in place in the file's text.
 */
export function tableCodes(t: CsvTable, j: number): { codes: Int32Array; texts: string[] } {
  const { text, start, end, quoted } = t
  const k = t.header.length
  const codes = new Int32Array(t.nRows)
  const texts: string[] = []
  const firstField: number[] = []
  let mask = 1023
  let slots = new Int32Array(mask + 1).fill(-1)
  const slotOf = (f: number, h: number): number => {
    const a = start[f]
    const len = end[f] - a
    let s = h & mask
    for (;;) {
      const c = slots[s]
      if (c < 0) return s
      const g = firstField[c]
      const b = start[g]
      if (end[g] - b === len && quoted[g] === quoted[f]) {
        let same = true
        for (let x = 0; x < len && same; x++) same = text.charCodeAt(a + x) === text.charCodeAt(b + x)
        if (same) return s
      }
      s = (s + 1) & mask
    }
  }
  const hashes: number[] = []
  const hashOf = (f: number): number => {
    let h = 0x811c9dc5
    for (let x = start[f]; x < end[f]; x++) h = Math.imul(h ^ text.charCodeAt(x), 0x01000193)
    return (h ^ quoted[f]) >>> 0
  }
  for (let i = 0; i < t.nRows; i++) {
    const f = i * k + j
    // long files repeat the unit of the row before: compare with it before hashing
    if (i > 0) {
      const g = f - k
      const len = end[f] - start[f]
      if (end[g] - start[g] === len && quoted[g] === quoted[f]) {
        let same = true
        for (let x = 0, a = start[f], b = start[g]; x < len && same; x++) same = text.charCodeAt(a + x) === text.charCodeAt(b + x)
        if (same) {
          codes[i] = codes[i - 1]
          continue
        }
      }
    }
    const h = hashOf(f)
    const s = slotOf(f, h)
    let c = slots[s]
    if (c < 0) {
      c = texts.length
      slots[s] = c
      firstField.push(f)
      hashes.push(h)
      texts.push(fieldText(t, i, j))
      if (texts.length * 2 > mask) {
        mask = mask * 2 + 1
        slots = new Int32Array(mask + 1).fill(-1)
        for (let d = 0; d < texts.length; d++) {
          let s2 = hashes[d] & mask
          while (slots[s2] >= 0) s2 = (s2 + 1) & mask
          slots[s2] = d
        }
      }
    }
    codes[i] = c
  }
  return { codes, texts }
}
