/**
 * The long panel: one row per unit and period, columns of numbers. Built once from parsed
 * CSV records (every cell a string) or from typed rows read from the database, then held as
 * typed arrays: unit and period indices (Int32Array) and one Float64Array per column, with
 * NaN for a missing cell. Units are sorted by id and periods by time, and rows by (unit,
 * period), so the order of the input rows never changes a result.
 *
 * Missing cells: empty, "NA", "N/A", "NaN", "NULL", "." (any case), or null in typed rows.
 * Numbers: decimal notation with optional exponent ("-1.5e-3"); anything else is refused.
 *
 * Throws EngineError: 'unknown_column' (naming the columns present), 'non_numeric' (naming
 * line and column), 'bad_period', 'duplicate_row' (naming the unit, period and both lines),
 * 'empty_panel'.
 */
import { type Period, type PeriodFrequency, PeriodError, commonFrequency, formatPeriod, parsePeriod, sameScale } from '../../shared/utils/periods'
import { type CsvTable, fieldText, tableCodes, tableNumbers } from './csvTable'
import { EngineError, listSome } from './errors'
import { readNumber } from './readNumber'

export { readNumber }

/** A row as the server reads it from the database. */
export interface TypedRow {
  unit: string
  period: string | number
  values: Record<string, number | null | undefined>
}

export type CsvRecord = Record<string, string | number | null | undefined>

export interface Panel {
  kind: 'panel'
  /** Unit ids by index, sorted. */
  units: string[]
  /** Distinct periods, sorted by time. */
  periods: Period[]
  frequency: PeriodFrequency
  nRows: number
  unit: Int32Array
  period: Int32Array
  columns: Record<string, Float64Array>
  /** Source position of each row for messages: CSV line number, or typed row number (1-based). */
  line: Int32Array
  lineLabel: 'line' | 'row'
}

/**
 * What the engine accepts: parsed CSV records (`firstLine` = file line of the first record,
 * default 2 after a header), a CSV table read into typed arrays (csvTable.ts), typed rows,
 * or a panel built before.
 */
export type PanelInput = { records: CsvRecord[]; firstLine?: number } | { table: CsvTable } | { rows: TypedRow[] } | Panel

export interface PanelColumns {
  unit: string
  period: string
  /** Numeric columns to read. */
  numeric: string[]
}

function unknownColumn(role: string, name: string, present: string[]): EngineError {
  return new EngineError('unknown_column', `unknown column "${name}" (${role}): the panel has ${listSome(present, 12)}`)
}

interface RawRows {
  n: number
  unitOf(i: number): unknown
  periodOf(i: number): unknown
  cell(i: number, column: string): unknown
  lineOf(i: number): number
  lineLabel: 'line' | 'row'
  columnNames: string[]
  /** A whole column as numbers at once (bad = 1 where a cell is not a number), when the input can. */
  numbers?(column: string): { values: Float64Array; bad: Uint8Array | null }
}

function rawFromRecords(records: CsvRecord[], firstLine: number, cols: PanelColumns): RawRows {
  const present = records.length ? Object.keys(records[0]) : []
  const roles: [string, string][] = [[cols.unit, 'unit'], [cols.period, 'period'], ...cols.numeric.map((c): [string, string] => [c, 'value'])]
  for (const [name, role] of roles) if (!present.includes(name)) throw unknownColumn(role, name, present)
  return {
    n: records.length,
    unitOf: (i) => records[i][cols.unit],
    periodOf: (i) => records[i][cols.period],
    cell: (i, c) => records[i][c],
    lineOf: (i) => firstLine + i,
    lineLabel: 'line',
    columnNames: present,
  }
}

function rawFromTable(t: CsvTable, cols: PanelColumns): RawRows {
  const present = t.header
  const roles: [string, string][] = [[cols.unit, 'unit'], [cols.period, 'period'], ...cols.numeric.map((c): [string, string] => [c, 'value'])]
  for (const [name, role] of roles) if (!present.includes(name)) throw unknownColumn(role, name, present)
  // units and periods dictionary-coded: one string per distinct text, not one per row
  const units = tableCodes(t, present.indexOf(cols.unit))
  const unitTexts = units.texts.map((u) => u.trim())
  const periods = tableCodes(t, present.indexOf(cols.period))
  return {
    n: t.nRows,
    unitOf: (i) => unitTexts[units.codes[i]],
    periodOf: (i) => periods.texts[periods.codes[i]],
    cell: (i, c) => fieldText(t, i, present.indexOf(c)),
    lineOf: (i) => t.line[i],
    lineLabel: 'line',
    columnNames: present,
    numbers: (c) => tableNumbers(t, present.indexOf(c)),
  }
}

function rawFromTyped(rows: TypedRow[], cols: PanelColumns): RawRows {
  const present = new Set<string>()
  for (const r of rows) for (const k of Object.keys(r.values)) present.add(k)
  for (const c of cols.numeric) if (!present.has(c)) throw unknownColumn('value', c, [...present])
  return {
    n: rows.length,
    unitOf: (i) => rows[i].unit,
    periodOf: (i) => rows[i].period,
    cell: (i, c) => rows[i].values[c],
    lineOf: (i) => i + 1,
    lineLabel: 'row',
    columnNames: [...present],
  }
}

/** Stable counting sort of row indices by a small integer key. */
function countingOrder(keys: Int32Array, nKeys: number, input: Int32Array): Int32Array {
  const start = new Int32Array(nKeys + 1)
  for (let i = 0; i < input.length; i++) start[keys[input[i]] + 1]++
  for (let k = 0; k < nKeys; k++) start[k + 1] += start[k]
  const out = new Int32Array(input.length)
  for (let i = 0; i < input.length; i++) out[start[keys[input[i]]]++] = input[i]
  return out
}

function buildFromRaw(raw: RawRows, cols: PanelColumns): Panel {
  const n = raw.n
  if (n === 0) throw new EngineError('empty_panel', 'the panel has no rows')
  // units: ids by first appearance, then sorted
  const unitIndex = new Map<string, number>()
  const unitFirst = new Int32Array(n)
  const periodIndex = new Map<string, number>()
  const periodTexts: Period[] = []
  const periodFirst = new Int32Array(n)
  for (let i = 0; i < n; i++) {
    const u = raw.unitOf(i)
    const uid = u === null || u === undefined ? '' : String(u).trim()
    if (uid === '') throw new EngineError('invalid_input', `${raw.lineLabel} ${raw.lineOf(i)}, column "${cols.unit}": the unit is empty`)
    let ui = unitIndex.get(uid)
    if (ui === undefined) unitIndex.set(uid, (ui = unitIndex.size))
    unitFirst[i] = ui
    const p = raw.periodOf(i)
    const key = typeof p === 'number' ? String(p) : typeof p === 'string' ? p : ''
    let pi = periodIndex.get(key)
    if (pi === undefined) {
      let parsed: Period
      try {
        parsed = parsePeriod(typeof p === 'number' ? p : key)
      } catch (e) {
        const why = e instanceof PeriodError ? e.message.replace(/^parsePeriod: /, '') : String(e)
        throw new EngineError('bad_period', `${raw.lineLabel} ${raw.lineOf(i)}, column "${cols.period}": ${why}`)
      }
      periodIndex.set(key, (pi = periodTexts.length))
      periodTexts.push(parsed)
    }
    periodFirst[i] = pi
  }
  let frequency: PeriodFrequency
  try {
    frequency = commonFrequency(periodTexts)
  } catch (e) {
    throw new EngineError('bad_period', `column "${cols.period}": ${(e as Error).message}`)
  }
  // distinct periods by ordinal (texts "1982" and " 1982" map to one period)
  const byOrdinal = new Map<number, number>()
  const sortedOrdinals = [...new Set(periodTexts.map((p) => p.ordinal))].sort((a, b) => a - b)
  sortedOrdinals.forEach((o, k) => byOrdinal.set(o, k))
  const periods: Period[] = sortedOrdinals.map((o) => {
    const p = periodTexts.find((q) => q.ordinal === o)!
    return frequency === p.frequency ? p : { frequency, canonical: String(o), ordinal: o }
  })
  const periodRemap = Int32Array.from(periodTexts, (p) => byOrdinal.get(p.ordinal)!)

  const unitIds = [...unitIndex.keys()]
  const sortedUnits = unitIds.map((id, k) => ({ id, k })).sort((a, b) => (a.id < b.id ? -1 : a.id > b.id ? 1 : 0))
  const unitRemap = new Int32Array(unitIds.length)
  sortedUnits.forEach((u, k) => (unitRemap[u.k] = k))

  const uKey = new Int32Array(n)
  const pKey = new Int32Array(n)
  for (let i = 0; i < n; i++) {
    uKey[i] = unitRemap[unitFirst[i]]
    pKey[i] = periodRemap[periodFirst[i]]
  }
  const identity = new Int32Array(n)
  for (let i = 0; i < n; i++) identity[i] = i
  const order = countingOrder(uKey, unitIds.length, countingOrder(pKey, periods.length, identity))

  const unit = new Int32Array(n)
  const period = new Int32Array(n)
  const line = new Int32Array(n)
  for (let r = 0; r < n; r++) {
    const i = order[r]
    unit[r] = uKey[i]
    period[r] = pKey[i]
    line[r] = raw.lineOf(i)
    if (r > 0 && unit[r] === unit[r - 1] && period[r] === period[r - 1]) {
      throw new EngineError(
        'duplicate_row',
        `duplicate rows for unit "${sortedUnits[unit[r]].id}", period ${periods[period[r]].canonical} (${raw.lineLabel}s ${Math.min(line[r - 1], line[r])} and ${Math.max(line[r - 1], line[r])})`,
      )
    }
  }
  const columns: Record<string, Float64Array> = {}
  for (const c of new Set(cols.numeric)) {
    const values = new Float64Array(n)
    const whole = raw.numbers?.(c)
    if (whole) {
      const { values: read, bad } = whole
      for (let r = 0; r < n; r++) {
        const i = order[r]
        if (bad && bad[i]) throw new EngineError('non_numeric', `${raw.lineLabel} ${raw.lineOf(i)}, column "${c}": ${JSON.stringify(raw.cell(i, c))} is not a number`)
        values[r] = read[i]
      }
      columns[c] = values
      continue
    }
    for (let r = 0; r < n; r++) {
      const i = order[r]
      const cell = raw.cell(i, c)
      const v = readNumber(cell)
      if (v === undefined) {
        throw new EngineError('non_numeric', `${raw.lineLabel} ${raw.lineOf(i)}, column "${c}": ${JSON.stringify(cell)} is not a number`)
      }
      values[r] = v
    }
    columns[c] = values
  }
  return { kind: 'panel', units: sortedUnits.map((u) => u.id), periods, frequency, nRows: n, unit, period, columns, line, lineLabel: raw.lineLabel }
}

function isPanel(input: PanelInput): input is Panel {
  return (input as Panel).kind === 'panel'
}

/**
 * Builds the panel with the named numeric columns. A panel built before is returned as it
 * is when it holds those columns.
 */
export function buildPanel(input: PanelInput, cols: PanelColumns): Panel {
  if (isPanel(input)) {
    for (const c of cols.numeric) if (!(c in input.columns)) throw unknownColumn('value', c, Object.keys(input.columns))
    return input
  }
  if ('records' in input) {
    if (!Array.isArray(input.records)) throw new EngineError('invalid_input', 'panel records must be an array')
    return buildFromRaw(rawFromRecords(input.records, input.firstLine ?? 2, cols), cols)
  }
  if ('table' in input && (input.table as CsvTable | undefined)?.kind === 'csv_table') return buildFromRaw(rawFromTable(input.table, cols), cols)
  if ('rows' in input && Array.isArray(input.rows)) return buildFromRaw(rawFromTyped(input.rows, cols), cols)
  throw new EngineError('invalid_input', 'panel input must be {records}, {table}, {rows} or a built panel')
}

/** Index of a unit id, or an 'unknown_unit' error naming every unknown id of `ids`. */
export function unitIndices(panel: Panel, ids: string[], role: string): number[] {
  const index = new Map(panel.units.map((u, i) => [u, i]))
  const unknown = ids.filter((u) => !index.has(u))
  if (unknown.length) {
    throw new EngineError('unknown_unit', `unknown unit${unknown.length > 1 ? 's' : ''} ${listSome(unknown)} in ${role}: not in the panel (it has ${panel.units.length} units, e.g. ${listSome(panel.units, 5)})`)
  }
  return ids.map((u) => index.get(u)!)
}

/** Ordinal of a period value written in a spec, checked against the panel's frequency. */
export function periodOrdinal(panel: Panel, value: string | number, role: string): number {
  let p: Period
  try {
    p = parsePeriod(value)
  } catch (e) {
    throw new EngineError('bad_period', `${role}: ${(e as Error).message.replace(/^parsePeriod: /, '')}`)
  }
  if (!sameScale(p.frequency, panel.frequency)) {
    throw new EngineError('bad_period', `${role}: period "${p.canonical}" is a ${p.frequency}, but the panel's periods are ${panel.frequency}s`)
  }
  return p.ordinal
}

/** Canonical text for an ordinal on the panel's scale. */
export function periodLabel(panel: Panel, ordinal: number): string {
  const k = panel.periods.findIndex((p) => p.ordinal === ordinal)
  return k >= 0 ? panel.periods[k].canonical : formatPeriod(panel.frequency, ordinal)
}
