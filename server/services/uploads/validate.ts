/**
 * Checks a read table against a mapping and the registry, and turns it into observations.
 * Pure: the registry comes in as lookups, so the same code runs in the preview, the upload
 * route (in the upload thread), the import job and the tests. The concerns live in
 * validate/: columns, layouts (wide period columns, long value columns), periods, cells
 * (numbers and duplicates), rows, rates and the summary.
 *
 * Every problem names its row (the header is row 1) and column: unknown jurisdiction codes,
 * unknown measures, unparseable periods, periods whose frequency does not fit the measure,
 * non-numeric values, rows with the wrong number of fields (a cut-off last line), duplicate
 * cells (same jurisdiction, measure and period twice), and a file that reads as a single
 * column where the mapping needs several (the wrong delimiter). Empty cells (and the
 * mapping's `missing` markers) are no value, not an error. At most MAX_PROBLEMS problems are
 * kept, with the total count; values quoted in them are clipped (limits.ts).
 */
import type { Mapping } from '../../../shared/schemas/uploads'
import { streamOf, type Table, type TableStream } from './readTable'
import { checkColumns } from './validate/columns'
import { knownMeasure, longValueColumns, measureSlots, widePeriodColumns, type PeriodColumn, type ValueColumn } from './validate/layouts'
import { periodReader } from './validate/periods'
import { collectProblems } from './validate/problems'
import { addRates } from './validate/rates'
import { readRows } from './validate/rows'
import { finish } from './validate/summary'
import { emptyObservations, type MeasureInfo, type NewMeasure, type Registry, type Validation } from './validate/types'

export { MAX_PROBLEMS } from './limits'
export { problemMessage } from './validate/problems'
export type { MeasureInfo, NewMeasure, Observations, Registry, Validation } from './validate/types'

export function validateTable(table: Table, mapping: Mapping, registry: Registry): Validation {
  return validateRows(streamOf(table), mapping, registry)
}

/**
 * validateTable() over a table read row by row (openTable): the rows are checked as they are
 * read and not kept. Throws UploadError when the CSV itself is not valid, as openTable does.
 */
export function validateRows(table: TableStream, mapping: Mapping, registry: Registry): Validation {
  const problems = collectProblems()
  const { report } = problems
  const warnings: string[] = [...(table.notes ?? [])]
  // a mapping that does not fit still reads the rows: to count them, and so that a CSV that
  // is not valid is refused as such first
  const fail = (): Validation => finish(problems.list, problems.count, warnings, emptyObservations(), [], table.eachRow(() => {}), 0)

  const index = checkColumns(table, mapping, report)
  if (!index) return fail()

  const slots = measureSlots()
  const readPeriod = periodReader()
  let periodColumns: PeriodColumn[] = []
  let valueColumns: ValueColumn[] = []
  let wideInfo: MeasureInfo | null = null
  if (mapping.layout === 'wide') {
    wideInfo = knownMeasure(registry, mapping.measure, null, null, report)
    if (!wideInfo) return fail()
    periodColumns = widePeriodColumns(table, mapping, index.get(mapping.jurisdiction)!, wideInfo, readPeriod, report)
  }
  else if ('values' in mapping) valueColumns = longValueColumns(mapping.values, index, registry, slots, report)
  if (problems.count) return fail()

  const rows = readRows(table, mapping, registry, { index, periodColumns, valueColumns, wideInfo, slots, readPeriod }, report)
  const unknown = [...rows.unknownCodes.keys()]
  if (unknown.length > 1) warnings.push(`${unknown.length} different unknown jurisdiction codes: ${unknown.slice(0, 12).map(c => `"${c.slice(0, 40)}"`).join(', ')}${unknown.length > 12 ? ', ...' : ''}.`)
  if (rows.observations.length === 0 && problems.count === 0) report(null, null, 'The file holds no values to import.')

  let observations = rows.observations
  let newMeasures: NewMeasure[] = []
  if (problems.count === 0 && mapping.rates.length) {
    ({ observations, newMeasures } = addRates(observations, mapping.rates, registry, report, warnings))
  }
  return finish(problems.list, problems.count, warnings, observations, newMeasures, rows.rows, rows.blanks, rows.jurisdictions)
}
