/** The columns a mapping needs: present once each, and not a whole line read as one column. Pure. */
import type { Mapping } from '../../../../shared/schemas/uploads'
import { clip } from '../limits'
import { delimiterName, likelyDelimiter, type TableHead } from '../readTable'
import type { Report } from './types'

const LISTED_COLUMNS = 20

function listColumns(columns: string[]): string {
  const shown = columns.slice(0, LISTED_COLUMNS).map(c => `"${clip(c)}"`).join(', ')
  return columns.length > LISTED_COLUMNS ? `${shown} and ${columns.length - LISTED_COLUMNS} more` : shown
}

/** Column name -> position, or null after reporting why the mapping does not fit the header. */
export function checkColumns(table: TableHead, mapping: Mapping, report: Report): Map<string, number> | null {
  const { columns } = table
  const needed = mapping.layout === 'wide'
    ? [mapping.jurisdiction]
    : [mapping.jurisdiction, mapping.period, ...('values' in mapping ? Object.keys(mapping.values) : [mapping.measure, mapping.value])]
  if (columns.length === 1 && (needed.length > 1 || mapping.layout === 'wide') && table.format === 'xlsx') {
    report(1, columns[0]!, `The sheet "${clip(table.sheet)}" has a single column, but the mapping needs ${Math.max(needed.length, 2)} or more: is the data on another sheet? Name that sheet in the mapping.`)
    return null
  }
  if (columns.length === 1 && (needed.length > 1 || mapping.layout === 'wide')) {
    const d = likelyDelimiter(columns[0]!)
    const hint = d ? ` It looks separated by ${delimiterName(d)}; choose that delimiter${table.delimiter ? ` instead of ${delimiterName(table.delimiter)}` : ''}.` : ''
    report(1, columns[0]!, `The file reads as a single column, but the mapping needs ${Math.max(needed.length, 2)} or more: the wrong delimiter?${hint}`)
    return null
  }
  const index = new Map<string, number>()
  const doubled = new Set<string>()
  columns.forEach((c, i) => {
    if (index.has(c)) doubled.add(c)
    else index.set(c, i)
  })
  let fine = true
  for (const col of needed) {
    if (!index.has(col)) report(1, col, `No column "${clip(col)}" in the file; its columns are: ${listColumns(columns)}.`)
    else if (doubled.has(col)) report(1, col, `Two columns are named "${clip(col)}"; rename one.`)
    else continue
    fine = false
  }
  return fine ? index : null
}
