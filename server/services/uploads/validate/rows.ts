/**
 * The rows of a table into observations. Every problem of a row is listed, each with its row
 * and column: an unknown code or an unreadable period does not hide a non-numeric value in
 * the same row. Pure.
 */
import type { Mapping } from '../../../../shared/schemas/uploads'
import { clip } from '../limits'
import type { Cell, Table } from '../readTable'
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

export interface RowResult { observations: Observations, blanks: number, jurisdictions: number, unknownCodes: Map<string, number> }

export function readRows(table: Table, mapping: Mapping, registry: Registry, plan: RowPlan, report: Report): RowResult {
  const { index, periodColumns, valueColumns, wideInfo, slots, readPeriod } = plan
  const missing = new Set(mapping.missing.map(m => m.trim()))
  const capacity = table.rows.length * Math.max(1, mapping.layout === 'wide' ? periodColumns.length : valueColumns.length || 1)
  const jurisdictionIds = new Int32Array(capacity)
  const measureIndex = new Uint16Array(capacity)
  const periods: string[] = new Array(capacity)
  const values = new Float64Array(capacity)
  let n = 0
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
    jurisdictionIds[n] = jid
    measureIndex[n] = slot
    periods[n] = period.canonical
    values[n] = value
    n++
  }

  /** The period of a long row for a measure, or null after reporting it. */
  const periodOf = (row: number, cells: Cell[], info: MeasureInfo): PeriodSlot | null => {
    const period = readPeriod(cells[pCol] ?? null, info.frequency)
    if (typeof period !== 'string') return period
    report(row, mapping.layout === 'long' ? mapping.period : null, period)
    return null
  }

  const wideSlot = wideInfo ? slots.slotOf(wideInfo.key) : 0
  for (let i = 0; i < table.rows.length; i++) {
    const cells = table.rows[i]!
    const row = table.rowNumbers[i]!
    if (strictWidth && cells.length !== table.columns.length) {
      report(row, null, `Row ${row} has ${cells.length} field${cells.length === 1 ? '' : 's'}, but the header has ${table.columns.length}${i === table.rows.length - 1 ? ' (the last line looks cut off or is a note)' : ''}.`)
      continue
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
      continue
    }
    if (mCol >= 0) {
      const key = cellText(cells[mCol] ?? null).trim()
      const info = key === '' ? null : registry.measures.get(key)
      if (!info) report(row, mName, key === '' ? 'No measure given.' : `Unknown measure "${clip(key)}": add it under Measures first.`)
      const period = info ? periodOf(row, cells, info) : null
      take(row, vName, jid, info ? slots.slotOf(key) : 0, period, cells[vCol] ?? null)
      continue
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
  }
  return {
    observations: { length: n, jurisdictionIds, measureIndex, measureKeys: slots.keys, periods, values },
    blanks,
    jurisdictions: jurisdictionsSeen.size,
    unknownCodes,
  }
}
