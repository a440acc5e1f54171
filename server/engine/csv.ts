/**
 * Long-format CSV text to panel records (papaparse): a header row, then one row per unit
 * and period; column names are free. Cells stay text; panel.ts reads them as numbers.
 *
 * Throws EngineError 'invalid_input' for an empty file, a missing or repeated header name,
 * or a row whose number of fields differs from the header (naming the line).
 */
import Papa from 'papaparse'
import { EngineError } from './errors'
import type { PanelInput } from './panel'

export function recordsFromCsv(text: string): PanelInput {
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text
  const parsed = Papa.parse<string[]>(body, { header: false, skipEmptyLines: 'greedy' })
  const rows = parsed.data
  if (rows.length === 0) throw new EngineError('invalid_input', 'the CSV file is empty')
  const header = rows[0].map((h) => h.trim())
  const blank = header.findIndex((h) => h === '')
  if (blank >= 0) throw new EngineError('invalid_input', `CSV header: column ${blank + 1} has no name`)
  const dup = header.find((h, i) => header.indexOf(h) !== i)
  if (dup !== undefined) throw new EngineError('invalid_input', `CSV header: column "${dup}" appears twice`)
  const quoteError = parsed.errors.find((e) => e.type === 'Quotes')
  if (quoteError) throw new EngineError('invalid_input', `CSV line ${(quoteError.row ?? 0) + 1}: ${quoteError.message}`)
  const records: Record<string, string>[] = new Array(rows.length - 1)
  for (let i = 1; i < rows.length; i++) {
    const row = rows[i]
    if (row.length !== header.length) {
      throw new EngineError('invalid_input', `CSV line ${i + 1}: ${row.length} fields, but the header has ${header.length}`)
    }
    const rec: Record<string, string> = {}
    for (let j = 0; j < header.length; j++) rec[header[j]] = row[j]
    records[i - 1] = rec
  }
  return { records, firstLine: 2 }
}
