/**
 * One panel cell read as a number. Missing cells: empty, "NA", "N/A", "NaN", "NULL", "."
 * (any case), null or undefined. Numbers: decimal notation with optional exponent
 * ("-1.5e-3"); anything else is not a number.
 */
const MISSING = new Set(['', 'na', 'n/a', 'nan', 'null', '.'])
const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/

/** Reads one cell: a finite number, NaN for missing, or undefined when it is not a number. */
export function readNumber(cell: unknown): number | undefined {
  if (cell === null || cell === undefined) return NaN
  if (typeof cell === 'number') return Number.isFinite(cell) ? cell : Number.isNaN(cell) ? NaN : undefined
  if (typeof cell !== 'string') return undefined
  const s = cell.trim()
  if (MISSING.has(s.toLowerCase())) return NaN
  if (!NUMBER.test(s)) return undefined
  const v = Number(s)
  return Number.isFinite(v) ? v : undefined
}

