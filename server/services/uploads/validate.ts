/**
 * Checks a read table against a mapping and the registry, and turns it into observations.
 * Pure: the registry comes in as lookups, so the same code runs in the preview, the upload
 * route, the import job and the tests.
 *
 * Every problem names its row (the header is row 1) and column: unknown jurisdiction codes,
 * unknown measures, unparseable periods, periods whose frequency does not fit the measure,
 * non-numeric values, rows with the wrong number of fields (a cut-off last line), duplicate
 * cells (same jurisdiction, measure and period twice), and a file that reads as a single
 * column where the mapping needs several (the wrong delimiter). Empty cells (and the
 * mapping's `missing` markers) are no value, not an error.
 *
 * Rates (mapping.rates): value = count / denominator x per, for every jurisdiction and
 * period where the file holds both; the rate is a measure of its own (created on import
 * when the registry lacks it, with the count's frequency).
 */
import type { Mapping, RateRequest, UploadProblem } from '../../../shared/schemas/uploads'
import type { MeasureFrequency } from '../../../shared/schemas/registry'
import { formatPeriod, parsePeriod, PeriodError } from '../../../shared/utils/periods'
import { delimiterName, likelyDelimiter, type Cell, type Table } from './readTable'

export interface MeasureInfo { id: number, key: string, label: string, unit: string, frequency: MeasureFrequency }

export interface Registry {
  jurisdictions: Map<string, number>
  measures: Map<string, MeasureInfo>
}

/** A measure the import must create (a rate the registry does not have yet). */
export interface NewMeasure { key: string, label: string, unit: string, kind: 'outcome', frequency: MeasureFrequency }

/** Observations as parallel arrays (the bulk insert sends them as they are). */
export interface Observations {
  length: number
  jurisdictionIds: Int32Array
  /** Index into measureKeys. */
  measureIndex: Uint16Array
  measureKeys: string[]
  periods: string[]
  values: Float64Array
}

export interface Validation {
  ok: boolean
  problems: UploadProblem[]
  /** All problems found; `problems` keeps the first MAX_PROBLEMS. */
  problemCount: number
  warnings: string[]
  observations: Observations
  newMeasures: NewMeasure[]
  summary: {
    rows: number
    observations: number
    blanks: number
    jurisdictions: number
    measures: Record<string, number>
    firstPeriod: string | null
    lastPeriod: string | null
  }
}

export const MAX_PROBLEMS = 1000
const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/
const DAY_MS = 86_400_000

/** The period of `frequency` that holds a spreadsheet date. */
function periodOfDate(d: Date, frequency: MeasureFrequency): string {
  const y = d.getUTCFullYear()
  const m = d.getUTCMonth() + 1
  switch (frequency) {
    case 'year': return String(y)
    case 'quarter': return `${y}-Q${Math.ceil(m / 3)}`
    case 'month': return `${y}-${String(m).padStart(2, '0')}`
    case 'day': return d.toISOString().slice(0, 10)
    case 'week': {
      const day = Math.floor(d.getTime() / DAY_MS)
      const weekday = (((day + 3) % 7) + 7) % 7
      return formatPeriod('week', (day - weekday + 3) / 7)
    }
  }
}

const isBlank = (c: Cell, missing: Set<string>): boolean =>
  c == null || (typeof c === 'string' && (c.trim() === '' || missing.has(c.trim())))

function cellText(c: Cell): string {
  if (c instanceof Date) return c.toISOString().slice(0, 10)
  return c == null ? '' : String(c)
}

export function validateTable(table: Table, mapping: Mapping, registry: Registry): Validation {
  const problems: UploadProblem[] = []
  let problemCount = 0
  const warnings: string[] = []
  const report = (row: number | null, column: string | null, problem: string) => {
    problemCount++
    if (problems.length < MAX_PROBLEMS) problems.push({ row, column, problem })
  }
  const missing = new Set(mapping.missing.map(m => m.trim()))
  const { columns } = table

  const fail = (): Validation => finish(problems, problemCount, warnings, emptyObservations(), [], 0, 0)

  // ------------------------------------------------------------ columns
  const needed = mapping.layout === 'wide'
    ? [mapping.jurisdiction]
    : [mapping.jurisdiction, mapping.period, ...('values' in mapping ? Object.keys(mapping.values) : [mapping.measure, mapping.value])]
  if (columns.length === 1 && (needed.length > 1 || mapping.layout === 'wide')) {
    const d = likelyDelimiter(columns[0]!)
    const hint = d ? ` It looks separated by ${delimiterName(d)}; choose that delimiter${table.delimiter ? ` instead of ${delimiterName(table.delimiter)}` : ''}.` : ''
    report(1, columns[0]!, `The file reads as a single column, but the mapping needs ${Math.max(needed.length, 2)} or more: the wrong delimiter?${hint}`)
    return fail()
  }
  const index = new Map<string, number>()
  const doubled = new Set<string>()
  columns.forEach((c, i) => {
    if (index.has(c)) doubled.add(c)
    else index.set(c, i)
  })
  for (const col of needed) {
    if (!index.has(col)) report(1, col, `No column "${col}" in the file; its columns are: ${columns.map(c => `"${c}"`).join(', ')}.`)
    else if (doubled.has(col)) report(1, col, `Two columns are named "${col}"; rename one.`)
  }
  if (problemCount) return fail()

  // ------------------------------------------------------------ measures and period columns
  const measureKeys: string[] = []
  const measureSlot = new Map<string, number>()
  const slotOf = (key: string): number => {
    let s = measureSlot.get(key)
    if (s === undefined) {
      s = measureKeys.length
      measureKeys.push(key)
      measureSlot.set(key, s)
    }
    return s
  }
  const knownMeasure = (key: string, row: number | null, column: string | null): MeasureInfo | null => {
    const m = registry.measures.get(key)
    if (!m) report(row, column, `Unknown measure "${key}": add it under Measures first.`)
    return m ?? null
  }

  const periodCache = new Map<string, { canonical: string, slot: number } | string>()
  let periodSlots = 0
  /** Canonical period or a problem text. */
  const readPeriod = (c: Cell, frequency: MeasureFrequency): { canonical: string, slot: number } | string => {
    const text = c instanceof Date ? `date:${c.getTime()}` : cellText(c).trim()
    const cacheKey = `${frequency}|${text}`
    const hit = periodCache.get(cacheKey)
    if (hit !== undefined) return hit
    let out: { canonical: string, slot: number } | string
    if (c == null || text === '') out = 'No period given.'
    else {
      try {
        let canonical: string
        if (c instanceof Date) canonical = periodOfDate(c, frequency)
        else {
          const p = parsePeriod(typeof c === 'number' ? c : text)
          if (p.frequency !== frequency) throw new PeriodError(`"${text}" is a ${p.frequency === 'integer' ? 'whole number' : p.frequency}, but the measure is recorded by ${frequency}.`)
          canonical = p.canonical
        }
        out = { canonical, slot: periodSlots++ }
      }
      catch (e) {
        out = e instanceof PeriodError ? e.message.replace(/^parsePeriod: /, '') : `Cannot read "${text}" as a period.`
      }
    }
    periodCache.set(cacheKey, out)
    return out
  }

  const valueColumns: { col: number, name: string, slot: number, info: MeasureInfo }[] = []
  const periodColumns: { col: number, name: string, canonical: string, slot: number }[] = []
  let wideInfo: MeasureInfo | null = null
  if (mapping.layout === 'wide') {
    wideInfo = knownMeasure(mapping.measure, null, null)
    if (!wideInfo) return fail()
    const ignore = new Set(mapping.ignore)
    const seen = new Map<string, string>()
    const jc = index.get(mapping.jurisdiction)!
    table.headerCells.forEach((h, col) => {
      const name = columns[col]!
      if (col === jc || ignore.has(name) || (name === '' && (h == null || String(h).trim() === ''))) return
      const p = readPeriod(h, wideInfo!.frequency)
      if (typeof p === 'string') {
        report(1, name, `Column "${name}" is not a period: ${p} List it under "ignore" if it is not data.`)
        return
      }
      const before = seen.get(p.canonical)
      if (before !== undefined) report(1, name, `Columns "${before}" and "${name}" are the same period ${p.canonical}.`)
      else seen.set(p.canonical, name)
      periodColumns.push({ col, name, canonical: p.canonical, slot: p.slot })
    })
    if (!periodColumns.length && !problemCount) report(1, null, 'The wide layout needs one column per period; none were found.')
  }
  else if ('values' in mapping) {
    for (const [name, key] of Object.entries(mapping.values)) {
      const info = knownMeasure(key, null, name)
      if (info) valueColumns.push({ col: index.get(name)!, name, slot: slotOf(key), info })
    }
  }
  if (problemCount) return fail()

  // ------------------------------------------------------------ rows
  const capacity = table.rows.length * Math.max(1, mapping.layout === 'wide' ? periodColumns.length : valueColumns.length || 1)
  const jurisdictionIds = new Int32Array(capacity)
  const measureIndex = new Uint16Array(capacity)
  const periods: string[] = new Array(capacity)
  const values = new Float64Array(capacity)
  let n = 0
  let blanks = 0
  const seenCells = new Map<number, number>()
  const jurisdictionsSeen = new Set<number>()
  const unknownCodes = new Map<string, number>()
  const lowerCodes = new Map<string, string>()
  for (const code of registry.jurisdictions.keys()) lowerCodes.set(code.toLowerCase(), code)

  const jCol = index.get(mapping.jurisdiction)!
  const pCol = mapping.layout === 'long' ? index.get(mapping.period)! : -1
  const mCol = mapping.layout === 'long' && 'measure' in mapping ? index.get(mapping.measure)! : -1
  const vCol = mapping.layout === 'long' && 'measure' in mapping ? index.get(mapping.value)! : -1
  const mName = mapping.layout === 'long' && 'measure' in mapping ? mapping.measure : ''
  const vName = mapping.layout === 'long' && 'measure' in mapping ? mapping.value : ''
  const strictWidth = table.format === 'csv'

  const push = (row: number, column: string, jid: number, slot: number, period: { canonical: string, slot: number }, cell: Cell) => {
    if (isBlank(cell, missing)) {
      blanks++
      return
    }
    let value: number
    if (typeof cell === 'number') value = cell
    else {
      const text = cellText(cell).trim()
      value = NUMBER.test(text) ? Number(text) : Number.NaN
      if (Number.isNaN(value)) {
        const hint = /^-?[\d.]+,\d+$/.test(text) ? ' (use "." for decimals and no thousands separator)' : ''
        report(row, column, `"${text}" is not a number${hint}.`)
        return
      }
    }
    if (!Number.isFinite(value)) {
      report(row, column, `"${cellText(cell)}" is not a finite number.`)
      return
    }
    const key = (jid * 256 + slot) * 2_097_152 + period.slot
    const first = seenCells.get(key)
    if (first !== undefined) {
      report(row, column, `Duplicate: ${measureKeys[slot]} for this jurisdiction and period ${period.canonical} is also in row ${first}.`)
      return
    }
    seenCells.set(key, row)
    jurisdictionIds[n] = jid
    measureIndex[n] = slot
    periods[n] = period.canonical
    values[n] = value
    n++
  }

  const wideSlot = wideInfo ? slotOf(wideInfo.key) : 0
  for (let i = 0; i < table.rows.length; i++) {
    const cells = table.rows[i]!
    const row = table.rowNumbers[i]!
    if (strictWidth && cells.length !== columns.length) {
      report(row, null, `Row ${row} has ${cells.length} field${cells.length === 1 ? '' : 's'}, but the header has ${columns.length}${i === table.rows.length - 1 ? ' (the last line looks cut off or is a note)' : ''}.`)
      continue
    }
    const code = cellText(cells[jCol] ?? null).trim()
    const jid = registry.jurisdictions.get(code)
    if (jid === undefined) {
      const near = lowerCodes.get(code.toLowerCase())
      report(row, mapping.jurisdiction, code === ''
        ? 'No jurisdiction code given.'
        : `Unknown jurisdiction code "${code}"${near ? ` (did you mean "${near}"?)` : ': add it under Jurisdictions first'}.`)
      unknownCodes.set(code, (unknownCodes.get(code) ?? 0) + 1)
      continue
    }
    jurisdictionsSeen.add(jid)
    if (mapping.layout === 'wide') {
      for (const pc of periodColumns) push(row, pc.name, jid, wideSlot, pc, cells[pc.col] ?? null)
      continue
    }
    if (mCol >= 0) {
      const key = cellText(cells[mCol] ?? null).trim()
      const info = key === '' ? null : registry.measures.get(key)
      if (!info) {
        report(row, mName, key === '' ? 'No measure given.' : `Unknown measure "${key}": add it under Measures first.`)
        continue
      }
      const period = readPeriod(cells[pCol] ?? null, info.frequency)
      if (typeof period === 'string') {
        report(row, mapping.period, period)
        continue
      }
      push(row, vName, jid, slotOf(key), period, cells[vCol] ?? null)
      continue
    }
    for (const vc of valueColumns) {
      const period = readPeriod(cells[pCol] ?? null, vc.info.frequency)
      if (typeof period === 'string') {
        report(row, mapping.period, period)
        break
      }
      push(row, vc.name, jid, vc.slot, period, cells[vc.col] ?? null)
    }
  }
  if (unknownCodes.size > 1) warnings.push(`${unknownCodes.size} different unknown jurisdiction codes: ${[...unknownCodes.keys()].slice(0, 12).map(c => `"${c}"`).join(', ')}${unknownCodes.size > 12 ? ', ...' : ''}.`)
  if (n === 0 && problemCount === 0) report(null, null, 'The file holds no values to import.')

  let observations: Observations = { length: n, jurisdictionIds, measureIndex, measureKeys, periods, values }
  let newMeasures: NewMeasure[] = []
  if (problemCount === 0 && mapping.rates.length) {
    ({ observations, newMeasures } = addRates(observations, mapping.rates, registry, report, warnings))
  }
  return finish(problems, problemCount, warnings, observations, newMeasures, table.rows.length, blanks, jurisdictionsSeen.size)
}

function emptyObservations(): Observations {
  return { length: 0, jurisdictionIds: new Int32Array(0), measureIndex: new Uint16Array(0), measureKeys: [], periods: [], values: new Float64Array(0) }
}

const perText = (per: number) => (per === 1000 ? '1,000' : '100,000')

function addRates(
  obs: Observations,
  rates: RateRequest[],
  registry: Registry,
  report: (row: number | null, column: string | null, problem: string) => void,
  warnings: string[],
): { observations: Observations, newMeasures: NewMeasure[] } {
  const newMeasures: NewMeasure[] = []
  const extra: { j: number, slot: number, p: string, v: number }[] = []
  const measureKeys = [...obs.measureKeys]
  for (const rate of rates) {
    const count = registry.measures.get(rate.count)
    const denominator = registry.measures.get(rate.denominator)
    const countSlot = obs.measureKeys.indexOf(rate.count)
    const denSlot = obs.measureKeys.indexOf(rate.denominator)
    if (!count || countSlot < 0) {
      report(null, null, `Rate ${rate.key}: the file holds no values of the count measure "${rate.count}".`)
      continue
    }
    if (!denominator || denSlot < 0) {
      report(null, null, `Rate ${rate.key}: the file holds no values of the denominator measure "${rate.denominator}".`)
      continue
    }
    if (count.frequency !== denominator.frequency) {
      report(null, null, `Rate ${rate.key}: ${rate.count} is recorded by ${count.frequency} but ${rate.denominator} by ${denominator.frequency}.`)
      continue
    }
    const existing = registry.measures.get(rate.key)
    if (existing && existing.frequency !== count.frequency) {
      report(null, null, `Rate ${rate.key}: the measure exists with frequency ${existing.frequency}, but ${rate.count} is recorded by ${count.frequency}.`)
      continue
    }
    if (obs.measureKeys.includes(rate.key)) {
      report(null, null, `Rate ${rate.key}: the file already holds values of "${rate.key}".`)
      continue
    }
    if (!existing) {
      newMeasures.push({
        key: rate.key,
        label: rate.label ?? `${count.label} per ${perText(rate.per)} ${denominator.label}`,
        unit: `per ${perText(rate.per)} ${denominator.label.toLowerCase()}`,
        kind: 'outcome',
        frequency: count.frequency,
      })
    }
    const slot = measureKeys.length
    measureKeys.push(rate.key)
    const den = new Map<string, number>()
    for (let i = 0; i < obs.length; i++) if (obs.measureIndex[i] === denSlot) den.set(`${obs.jurisdictionIds[i]}|${obs.periods[i]}`, obs.values[i]!)
    let noDenominator = 0
    let zero = 0
    for (let i = 0; i < obs.length; i++) {
      if (obs.measureIndex[i] !== countSlot) continue
      const d = den.get(`${obs.jurisdictionIds[i]}|${obs.periods[i]}`)
      if (d === undefined) noDenominator++
      else if (d === 0) zero++
      else extra.push({ j: obs.jurisdictionIds[i]!, slot, p: obs.periods[i]!, v: (obs.values[i]! / d) * rate.per })
    }
    if (noDenominator) warnings.push(`Rate ${rate.key}: ${noDenominator} count value(s) have no ${rate.denominator} for the same jurisdiction and period; no rate for them.`)
    if (zero) warnings.push(`Rate ${rate.key}: ${zero} ${rate.denominator} value(s) are 0; no rate for them.`)
  }
  if (!extra.length) return { observations: { ...obs, measureKeys }, newMeasures }
  const length = obs.length + extra.length
  const out: Observations = {
    length,
    jurisdictionIds: new Int32Array(length),
    measureIndex: new Uint16Array(length),
    measureKeys,
    periods: obs.periods.slice(0, obs.length),
    values: new Float64Array(length),
  }
  out.jurisdictionIds.set(obs.jurisdictionIds.subarray(0, obs.length))
  out.measureIndex.set(obs.measureIndex.subarray(0, obs.length))
  out.values.set(obs.values.subarray(0, obs.length))
  extra.forEach((e, k) => {
    const i = obs.length + k
    out.jurisdictionIds[i] = e.j
    out.measureIndex[i] = e.slot
    out.periods.push(e.p)
    out.values[i] = e.v
  })
  return { observations: out, newMeasures }
}

function finish(
  problems: UploadProblem[],
  problemCount: number,
  warnings: string[],
  observations: Observations,
  newMeasures: NewMeasure[],
  rows: number,
  blanks: number,
  jurisdictions = 0,
): Validation {
  const counts: Record<string, number> = {}
  let first: string | null = null
  let last: string | null = null
  for (let i = 0; i < observations.length; i++) {
    const key = observations.measureKeys[observations.measureIndex[i]!]!
    counts[key] = (counts[key] ?? 0) + 1
    const p = observations.periods[i]!
    if (first === null || p < first) first = p
    if (last === null || p > last) last = p
  }
  const ok = problemCount === 0
  return {
    ok,
    problems,
    problemCount,
    warnings,
    observations: ok ? observations : emptyObservations(),
    newMeasures: ok ? newMeasures : [],
    summary: { rows, observations: ok ? observations.length : 0, blanks, jurisdictions, measures: ok ? counts : {}, firstPeriod: ok ? first : null, lastPeriod: ok ? last : null },
  }
}

/** The message of a failed validation: the count and the first problem. */
export function problemMessage(v: Pick<Validation, 'problems' | 'problemCount'>): string {
  const first = v.problems[0]
  if (!first) return 'The file has problems.'
  const where = [first.row != null ? `row ${first.row}` : null, first.column ? `column "${first.column}"` : null].filter(Boolean).join(', ')
  return `The file has ${v.problemCount} problem${v.problemCount === 1 ? '' : 's'}; nothing was imported. First: ${where ? `${where}: ` : ''}${first.problem}`
}
