/**
 * What each layout reads its values from: a wide file's period columns (one measure), or a
 * long file's value columns (one measure each); a long file with a measure column needs
 * neither. Pure.
 */
import type { Mapping } from '../../../../shared/schemas/uploads'
import { clip } from '../limits'
import type { TableHead } from '../readTable'
import type { MeasureInfo, PeriodSlot, Registry, Report } from './types'
import type { periodReader } from './periods'

export interface MeasureSlots { keys: string[], slotOf: (key: string) => number }

/** Measure keys in the order first met; the slot is the index into keys. */
export function measureSlots(): MeasureSlots {
  const keys: string[] = []
  const slots = new Map<string, number>()
  return {
    keys,
    slotOf: (key) => {
      let s = slots.get(key)
      if (s === undefined) {
        s = keys.length
        keys.push(key)
        slots.set(key, s)
      }
      return s
    },
  }
}

export function knownMeasure(registry: Registry, key: string, row: number | null, column: string | null, report: Report): MeasureInfo | null {
  const m = registry.measures.get(key)
  if (!m) report(row, column, `Unknown measure "${clip(key)}": add it under Measures first.`)
  return m ?? null
}

export interface PeriodColumn extends PeriodSlot { col: number, name: string }
export interface ValueColumn { col: number, name: string, slot: number, info: MeasureInfo }

/** A wide file: every header cell but the jurisdiction and ignored columns must be a period. */
export function widePeriodColumns(
  table: TableHead, mapping: Extract<Mapping, { layout: 'wide' }>, jurisdictionCol: number, info: MeasureInfo,
  readPeriod: ReturnType<typeof periodReader>, report: Report,
): PeriodColumn[] {
  const ignore = new Set(mapping.ignore)
  const seen = new Map<string, string>()
  const out: PeriodColumn[] = []
  let problems = 0
  table.headerCells.forEach((h, col) => {
    const name = table.columns[col]!
    if (col === jurisdictionCol || ignore.has(name) || (name === '' && (h == null || String(h).trim() === ''))) return
    const p = readPeriod(h, info.frequency)
    if (typeof p === 'string') {
      problems++
      report(1, name, `Column "${clip(name)}" is not a period: ${p} List it under "ignore" if it is not data.`)
      return
    }
    const before = seen.get(p.canonical)
    if (before !== undefined) {
      problems++
      report(1, name, `Columns "${clip(before)}" and "${clip(name)}" are the same period ${p.canonical}.`)
    }
    else seen.set(p.canonical, name)
    out.push({ col, name, canonical: p.canonical, slot: p.slot })
  })
  if (!out.length && !problems) report(1, null, 'The wide layout needs one column per period; none were found.')
  return out
}

/** A long file with value columns: each names a measure the registry knows. */
export function longValueColumns(values: Record<string, string>, index: Map<string, number>, registry: Registry, slots: MeasureSlots, report: Report): ValueColumn[] {
  const out: ValueColumn[] = []
  for (const [name, key] of Object.entries(values)) {
    const info = knownMeasure(registry, key, null, name, report)
    if (info) out.push({ col: index.get(name)!, name, slot: slots.slotOf(key), info })
  }
  return out
}
