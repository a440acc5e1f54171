/**
 * Every limit an uploaded file is held to, in one place. They are checked before the file is
 * parsed (preflight.ts): a workbook's zip directory is read for the unpacked sizes, a CSV is
 * scanned once and refused at the first limit it passes. Pure (relative imports only).
 */

/** Unpacked size of all parts of an XLSX workbook together. */
export const MAX_XLSX_UNPACKED_BYTES = 100 * 1024 * 1024
/** Unpacked size of any one part (a sheet's XML, the shared strings). */
export const MAX_XLSX_PART_BYTES = 64 * 1024 * 1024
/**
 * Unpacked / packed size of one part. Real sheet XML packs about 5 to 20 times; a ratio in
 * the hundreds is a file built to unpack into far more than it looks (a "zip bomb").
 */
export const MAX_XLSX_RATIO = 100
/** The ratio is only judged for parts that unpack to more than this (tiny parts pack oddly). */
export const RATIO_FLOOR_BYTES = 1024 * 1024
/** Parts in one workbook. */
export const MAX_XLSX_PARTS = 2000

/** Data rows (the import figure in DESIGN.md is a million rows; twice that is the ceiling). */
export const MAX_ROWS = 2_000_000
/** Columns of the header or of any row. */
export const MAX_COLUMNS = 10_000
/** Characters in one cell. */
export const MAX_CELL_CHARS = 1_000

/** Problems listed in a reply; the total count is always given too. */
export const MAX_PROBLEMS = 100
/** Characters of a file's value quoted in a message. */
export const QUOTE_CHARS = 40

/** Time the parse of one upload may take before it is stopped, and the memory it may use. */
export const PARSE_TIMEOUT_MS = 120_000
export const PARSE_HEAP_MB = 1024

/** A value from the file as it may appear in a message: at most QUOTE_CHARS characters. */
export function clip(value: unknown, max = QUOTE_CHARS): string {
  const text = value == null ? '' : String(value)
  if (text.length <= max) return text
  return `${text.slice(0, max - 1)}\u2026 (${text.length.toLocaleString('en')} characters)`
}

export function countText(n: number): string {
  return n.toLocaleString('en')
}
