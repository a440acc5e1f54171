/**
 * The rows of a table into observations. Every problem of a row is listed, each with its row
 * and column: an unknown code or an unreadable period does not hide a non-numeric value in
 * the same row. Pure.
 */
import type { Mapping } from '../../../../shared/schemas/uploads'
import { clip } from '../limits'
import type { Cell, TableStream } from '../readTable'
import { CellRegister, cellText, readValue } from './cells'
import type { MeasureSlots, PeriodColumn, ValueColumn } from './layouts'
import type { periodReader } from './periods'
import type { MeasureInfo, Observations, PeriodSlot, Registry, Report } from './types'

export interface RowPlan {
  index: Map<string, number>
  periodColumns: PeriodColumn[]
  valueColumns: ValueColumn[]
  wideInfo: MeasureInfo | null
  slots: MeasureSlots
  readPeriod: ReturnType<typeof periodReader>
}

export interface RowResult { observations: Observations, rows: number, blanks: number, jurisdictions: number, unknownCodes: Map<string, number> }

/** Typed arrays that double when full. */
class ObservationStore {
  jurisdictionIds = new Int32Array(4096)
  measureIndex = new Uint16Array(4096)
  periods: string[] = []
  values = new Float64Array(4096)
  length = 0

  push(jid: number, slot: number, period: string, value: number): void {
    if (this.length === this.values.length) this.grow()
    const n = this.length++
    this.jurisdictionIds[n] = jid
    this.measureIndex[n] = slot
    this.periods.push(period)
    this.values[n] = value
  }

  private grow(): void {
    const size = this.values.length * 2
    const j = new Int32Array(size)
    j.set(this.jurisdictionIds)
    const m = new Uint16Array(size)
    m.set(this.measureIndex)
    const v = new Float64Array(size)
    v.set(this.values)
    this.jurisdictionIds = j
    this.measureIndex = m
    this.values = v
  }
}

export function readRows(table: TableStream, mapping: Mapping, registry: Registry, plan: RowPlan, report: Report): RowResult {
  const { index, periodColumns, valueColumns, wideInfo, slots, readPeriod } = plan
  const missing = new Set(mapping.missing.map(m => m.trim()))
  const store = new ObservationStore()
  let blanks = 0
  const register = new CellRegister()
  const jurisdictionsSeen = new Set<number>()
  const unknownCodes = new Map<string, number>()
  const lowerCodes = new Map<string, string>()
  for (const code of registry.jurisdictions.keys()) lowerCodes.set(code.toLowerCase(), code)

  const long = mapping.layout === 'long'
  const byMeasureColumn = long && 'measure' in mapping
  const jCol = index.get(mapping.jurisdiction)!
  const pCol = long ? index.get(mapping.period)! : -1
  const mCol = byMeasureColumn ? index.get(mapping.measure)! : -1
  const vCol = byMeasureColumn ? index.get(mapping.value)! : -1
  const mName = byMeasureColumn ? mapping.measure : ''
  const vName = byMeasureColumn ? mapping.value : ''
  const strictWidth = table.format === 'csv'

  /** Checks one value cell; stores it when the row's jurisdiction and period are good. */
  const take = (row: number, column: string, jid: number | undefined, slot: number, period: PeriodSlot | null, cell: Cell) => {
    const value = readValue(cell, missing)
    if (value === null) {
      blanks++
      return
    }
    if (typeof value === 'string') {
      report(row, column, value)
      return
    }
    if (jid === undefined || period === null) return
    const first = register.firstRow(jid, slot, period.slot, row)
    if (first !== undefined) {
      report(row, column, `Duplicate: ${slots.keys[slot]} for this jurisdiction and period ${period.canonical} is also in row ${first}.`)
      return
    }
    store.push(jid, slot, period.canonical, value)
  }

  /** The period of a long row for a measure, or null after reporting it. */
  const periodOf = (row: number, cells: Cell[], info: MeasureInfo): PeriodSlot | null => {
    const period = readPeriod(cells[pCol] ?? null, info.frequency)
    if (typeof period !== 'string') return period
    report(row, mapping.layout === 'long' ? mapping.period : null, period)
    return null
  }

  const wideSlot = wideInfo ? slots.slotOf(wideInfo.key) : 0
  const width = table.columns.length
  // A row of the wrong width is reported when the next row comes (or the file ends), as only
  // then is it known whether it was the last line, which is then named as likely cut off.
  let wrongWidth: { row: number, fields: number } | null = null
  const reportWidth = (last: boolean) => {
    const { row, fields } = wrongWidth!
    wrongWidth = null
    report(row, null, `Row ${row} has ${fields} field${fields === 1 ? '' : 's'}, but the header has ${width}${last ? ' (the last line looks cut off or is a note)' : ''}.`)
  }
  const rowCount = table.eachRow((cells, row) => {
    if (wrongWidth) reportWidth(false)
    if (strictWidth && cells.length !== width) {
      wrongWidth = { row, fields: cells.length }
      return
    }
    const code = cellText(cells[jCol] ?? null).trim()
    const jid = registry.jurisdictions.get(code)
    if (jid === undefined) {
      const near = lowerCodes.get(code.toLowerCase())
      report(row, mapping.jurisdiction, code === ''
        ? 'No jurisdiction code given.'
        : `Unknown jurisdiction code "${clip(code)}"${near ? ` (did you mean "${near}"?)` : ': add it under Jurisdictions first'}.`)
      unknownCodes.set(code, (unknownCodes.get(code) ?? 0) + 1)
    }
    else jurisdictionsSeen.add(jid)

    if (mapping.layout === 'wide') {
      for (const pc of periodColumns) take(row, pc.name, jid, wideSlot, pc, cells[pc.col] ?? null)
      return
    }
    if (mCol >= 0) {
      const key = cellText(cells[mCol] ?? null).trim()
      const info = key === '' ? null : registry.measures.get(key)
      if (!info) report(row, mName, key === '' ? 'No measure given.' : `Unknown measure "${clip(key)}": add it under Measures first.`)
      const period = info ? periodOf(row, cells, info) : null
      take(row, vName, jid, info ? slots.slotOf(key) : 0, period, cells[vCol] ?? null)
      return
    }
    // The value columns of one frequency share the row's period; a bad period is listed once.
    const byFrequency = new Map<string, PeriodSlot | null>()
    let periodReported = false
    for (const vc of valueColumns) {
      let period = byFrequency.get(vc.info.frequency)
      if (period === undefined) {
        const read = readPeriod(cells[pCol] ?? null, vc.info.frequency)
        period = typeof read === 'string' ? null : read
        if (typeof read === 'string' && !periodReported) {
          periodReported = true
          report(row, mapping.period, read)
        }
        byFrequency.set(vc.info.frequency, period)
      }
      take(row, vc.name, jid, vc.slot, period, cells[vc.col] ?? null)
    }
  })
  if (wrongWidth) reportWidth(true)
  const { length, jurisdictionIds, measureIndex, periods, values } = store
  return {
    observations: { length, jurisdictionIds, measureIndex, measureKeys: slots.keys, periods, values },
    rows: rowCount,
    blanks,
    jurisdictions: jurisdictionsSeen.size,
    unknownCodes,
  }
}
