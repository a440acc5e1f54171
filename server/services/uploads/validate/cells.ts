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
 * Non-negative integer keys (below 2^53) to the row first seen with them: open addressing over
 * typed arrays, so a million cells cost two arrays instead of a million map entries for the
 * garbage collector (the check of a million-row upload spent most of its time there).
 */
export class FirstSeen {
  private keys: Float64Array
  private rows: Int32Array
  private used = 0
  private mask: number

  constructor(capacity = 1024) {
    let size = 16
    while (size < capacity * 2) size *= 2
    this.keys = new Float64Array(size).fill(-1)
    this.rows = new Int32Array(size)
    this.mask = size - 1
  }

  get size(): number {
    return this.used
  }

  private slot(key: number): number {
    const lo = key % 4294967296
    const hi = (key - lo) / 4294967296
    let h = Math.imul((lo | 0) ^ Math.imul(hi | 0, 0x9E3779B1), 0x85EBCA6B)
    h ^= h >>> 15
    let at = h & this.mask
    while (this.keys[at] !== -1 && this.keys[at] !== key) at = (at + 1) & this.mask
    return at
  }

  /** The row already recorded for `key`, or undefined after recording `row` for it. */
  firstRow(key: number, row: number): number | undefined {
    const at = this.slot(key)
    if (this.keys[at] === key) return this.rows[at]
    this.keys[at] = key
    this.rows[at] = row
    if (++this.used * 2 > this.keys.length) this.grow()
    return undefined
  }

  private grow(): void {
    const { keys, rows } = this
    this.keys = new Float64Array(keys.length * 2).fill(-1)
    this.rows = new Int32Array(keys.length * 2)
    this.mask = this.keys.length - 1
    for (let i = 0; i < keys.length; i++) {
      if (keys[i] === -1) continue
      const at = this.slot(keys[i]!)
      this.keys[at] = keys[i]!
      this.rows[at] = rows[i]!
    }
  }
}

/**
 * Where each (jurisdiction, measure, period) cell was first seen: one table per measure slot,
 * keyed by jurisdiction id x 2^22 + period slot (exact below 2^53 for any int32 id), so any
 * number of measures packs without collisions.
 */
export class CellRegister {
  private readonly byMeasure: FirstSeen[] = []

  /** The row that already holds the cell, or undefined after recording `row` for it. */
  firstRow(jurisdictionId: number, measureSlot: number, periodSlot: number, row: number): number | undefined {
    if (periodSlot >= PERIOD_SLOTS) throw new Error(`CellRegister: period slot ${periodSlot} is past ${PERIOD_SLOTS}.`)
    const seen = (this.byMeasure[measureSlot] ??= new FirstSeen())
    return seen.firstRow(jurisdictionId * PERIOD_SLOTS + periodSlot, row)
  }
}
