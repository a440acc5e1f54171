/** Value cells: blank, a number, or a problem; and the store that catches a cell given twice. Pure. */
import { clip } from '../limits'
import type { Cell } from '../readTable'

const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/

export function cellText(c: Cell): string {
  if (c instanceof Date) return c.toISOString().slice(0, 10)
  return c == null ? '' : String(c)
}

export const isBlank = (c: Cell, missing: Set<string>): boolean =>
  c == null || (typeof c === 'string' && (c.trim() === '' || missing.has(c.trim())))

/** The number in a value cell, null for a blank (or a `missing` marker), or the problem text. */
export function readValue(cell: Cell, missing: Set<string>): number | null | string {
  if (isBlank(cell, missing)) return null
  if (typeof cell === 'number') return Number.isFinite(cell) ? cell : `"${cell}" is not a finite number.`
  const text = cellText(cell).trim()
  const value = NUMBER.test(text) ? Number(text) : Number.NaN
  if (Number.isNaN(value)) {
    const hint = /^-?[\d.]+,\d+$/.test(text) ? ' (use "." for decimals and no thousands separator)' : ''
    return `"${clip(text)}" is not a number${hint}.`
  }
  if (!Number.isFinite(value)) return `"${clip(text)}" is not a finite number.`
  return value
}

/** Largest period slot + 1 the key packing allows (the row and column limits keep slots below it). */
const PERIOD_SLOTS = 2 ** 22

/**
 * Where each (jurisdiction, measure, period) cell was first seen: one map per measure slot,
 * keyed by jurisdiction id x 2^22 + period slot (exact below 2^53 for any int32 id), so any
 * number of measures packs without collisions.
 */
export class CellRegister {
  private readonly byMeasure: Map<number, number>[] = []

  /** The row that already holds the cell, or undefined after recording `row` for it. */
  firstRow(jurisdictionId: number, measureSlot: number, periodSlot: number, row: number): number | undefined {
    if (periodSlot >= PERIOD_SLOTS) throw new Error(`CellRegister: period slot ${periodSlot} is past ${PERIOD_SLOTS}.`)
    const seen = (this.byMeasure[measureSlot] ??= new Map())
    const key = jurisdictionId * PERIOD_SLOTS + periodSlot
    const first = seen.get(key)
    if (first === undefined) seen.set(key, row)
    return first
  }
}
