/**
 * CSV of any results table, for the browser:
 *   downloadCsv('estimates.csv', [{ key: 'term', header: 'Term' }, ...], rows)
 * Comma-separated, a header row, fields quoted when they hold a comma, quote or line break.
 * Numbers are written in full precision. Text that starts with = + - @ (or a tab or carriage
 * return) gets a leading apostrophe, so a spreadsheet opening the file never runs it as a formula.
 */
import { guardFormula } from '#shared/delivery/formulaGuard'

export interface CsvColumn<T> {
  key: keyof T & string
  header: string
  /** Turns the cell into text or a number (default: the value as it is). */
  value?: (row: T) => unknown
}

export function csvField(value: unknown): string {
  if (value === null || value === undefined) return ''
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : ''
  let text = typeof value === 'string' ? value : typeof value === 'boolean' ? String(value) : JSON.stringify(value)
  text = guardFormula(text)
  return /[",\n\r]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text
}

export function toCsv<T>(columns: CsvColumn<T>[], rows: readonly T[]): string {
  const lines = [columns.map(c => csvField(c.header)).join(',')]
  for (const row of rows) lines.push(columns.map(c => csvField(c.value ? c.value(row) : row[c.key])).join(','))
  return `${lines.join('\r\n')}\r\n`
}

/** Hands a file to the browser as a download. */
export function downloadBlob(fileName: string, blob: Blob): void {
  const url = URL.createObjectURL(blob)
  const a = document.createElement('a')
  a.href = url
  a.download = fileName
  document.body.appendChild(a)
  a.click()
  a.remove()
  setTimeout(() => URL.revokeObjectURL(url), 1000)
}

export function downloadCsv<T>(fileName: string, columns: CsvColumn<T>[], rows: readonly T[]): void {
  downloadBlob(fileName, new Blob([toCsv(columns, rows)], { type: 'text/csv;charset=utf-8' }))
}
