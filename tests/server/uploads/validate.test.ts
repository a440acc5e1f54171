/**
 * The upload reader and validator on small hand-made files: every problem with its row and column.
 * Each file is checked twice, by the rows read into memory (readTable + validateTable) and by
 * the one pass the upload check makes (checkUpload: rows visited, not kept); both must agree.
 */
import ExcelJS from 'exceljs'
import { describe, expect, it } from 'vitest'
import { mappingSchema, type MappingInput } from '#shared/schemas/uploads'
import { readTable, UploadError } from '~~/server/services/uploads/readTable'
import { validateTable, type Registry } from '~~/server/services/uploads/validate'
import { checkUpload } from '~~/server/services/uploads/checkUpload'

const registry: Registry = {
  jurisdictions: new Map([['AA-01', 1], ['AA-02', 2], ['BB-01', 3]]),
  measures: new Map([
    ['filings', { id: 10, key: 'filings', label: 'Eviction filings', unit: 'filings', frequency: 'month' as const }],
    ['households', { id: 11, key: 'households', label: 'Renter households', unit: 'households', frequency: 'month' as const }],
    ['income', { id: 12, key: 'income', label: 'Median income', unit: 'currency', frequency: 'year' as const }],
  ]),
}

const csv = (text: string) => Buffer.from(text)
async function check(text: string | Buffer, mapping: MappingInput, fileName = 'file.csv') {
  const m = mappingSchema.parse(mapping)
  const file = typeof text === 'string' ? csv(text) : text
  const streamed = await checkUpload({ file, fileName, options: m, mapping: m, registry, sampleRows: 2, keepObservations: true })
  let table
  try {
    table = await readTable(file, fileName, m)
  }
  catch (e) {
    expect(streamed).toMatchObject({ ok: false, message: (e as UploadError).message, problems: (e as UploadError).problems })
    throw e
  }
  const validation = validateTable(table, m, registry)
  expect(streamed.ok && streamed.validation).toEqual(validation)
  expect(streamed.ok && [streamed.table.rowCount, streamed.table.sample]).toEqual([table.rows.length, table.rows.slice(0, 2)])
  return validation
}
const long = { layout: 'long', jurisdiction: 'code', period: 'period', values: { filings: 'filings' } } as const

describe('long layout with value columns', () => {
  it('reads a good file into observations', async () => {
    const v = await check('code,period,filings,households\nAA-01,2020-01,5,1000\nAA-01,2020-2,6,1000\nAA-02,2020-01,,900\n',
      { ...long, values: { filings: 'filings', households: 'households' } })
    expect(v.ok).toBe(true)
    expect(v.observations.length).toBe(5)
    expect(v.summary).toMatchObject({ rows: 3, observations: 5, blanks: 1, jurisdictions: 2, firstPeriod: '2020-01', lastPeriod: '2020-02' })
    expect(v.observations.periods.slice(0, 5)).toEqual(['2020-01', '2020-01', '2020-02', '2020-02', '2020-01'])
  })

  it('reports unknown codes, bad periods, text among numbers and duplicates with row and column', async () => {
    const v = await check('code,period,filings\nAA-01,2020-01,5\nZZ-99,2020-01,5\naa-01,2020-02,1\nAA-01,2020-13,5\nAA-01,2020-03,n/a\nAA-01,2020-01,7\nAA-02,2020,3\n', long)
    expect(v.ok).toBe(false)
    expect(v.problems).toEqual([
      { row: 3, column: 'code', problem: 'Unknown jurisdiction code "ZZ-99": add it under Jurisdictions first.' },
      { row: 4, column: 'code', problem: 'Unknown jurisdiction code "aa-01" (did you mean "AA-01"?).' },
      { row: 5, column: 'period', problem: expect.stringContaining('month 13') },
      { row: 6, column: 'filings', problem: '"n/a" is not a number.' },
      { row: 7, column: 'filings', problem: 'Duplicate: filings for this jurisdiction and period 2020-01 is also in row 2.' },
      { row: 8, column: 'period', problem: '"2020" is a year, but the measure is recorded by month.' },
    ])
    expect(v.observations.length).toBe(0)
  })

  it('sees one cell in two spellings of its period ("2020-2", " 2020-02") as a duplicate', async () => {
    const v = await check('code,period,filings\nAA-01,2020-02,5\nAA-01,2020-2,6\nAA-01, 2020-02 ,7\nAA-02,2020-2,1\n', long)
    expect(v.ok).toBe(false)
    expect(v.problems).toEqual([
      { row: 3, column: 'filings', problem: 'Duplicate: filings for this jurisdiction and period 2020-02 is also in row 2.' },
      { row: 4, column: 'filings', problem: 'Duplicate: filings for this jurisdiction and period 2020-02 is also in row 2.' },
    ])
  })

  it('takes decimal commas as a problem with a hint, and the missing markers as blanks', async () => {
    const v = await check('code,period,filings\nAA-01,2020-01,"5,5"\nAA-01,2020-02,..\n', { ...long, missing: ['..'] })
    expect(v.problems).toEqual([{ row: 2, column: 'filings', problem: '"5,5" is not a number (use "." for decimals and no thousands separator).' }])
    expect(v.summary.blanks).toBe(1)
  })

  it('names a cut-off last line', async () => {
    const v = await check('code,period,filings\nAA-01,2020-01,5\nAA-01,2020-02', long)
    expect(v.problems).toEqual([{ row: 3, column: null, problem: 'Row 3 has 2 fields, but the header has 3 (the last line looks cut off or is a note).' }])
  })

  it('names a short row in the middle without calling it the last, in row order with the rows after it', async () => {
    const v = await check('code,period,filings\nAA-01,2020-01,5\nAA-01,2020-02\nZZ-99,2020-03,1\nAA-01,2020-04,5\n', long)
    expect(v.problems).toEqual([
      { row: 3, column: null, problem: 'Row 3 has 2 fields, but the header has 3.' },
      { row: 4, column: 'code', problem: 'Unknown jurisdiction code "ZZ-99": add it under Jurisdictions first.' },
    ])
  })

  it('refuses a CSV with a malformed quote, naming its row (blank lines keep their numbers)', async () => {
    const file = 'code,period,filings\n\nAA-01,2020-01,5\nAA-01,"2020-02"x,6\nAA-02,2020-01,1\n'
    const e = await check(file, long).catch((err: unknown) => err)
    expect(e).toBeInstanceOf(UploadError)
    expect((e as UploadError).message).toBe('The file is not valid CSV: Trailing quote on quoted field is malformed (row 4).')
  })

  it('detects the wrong delimiter', async () => {
    const v = await check('code:period:filings\nAA-01:2020-01:5\n', long)
    expect(v.problems[0]).toMatchObject({ row: 1, column: 'code:period:filings', problem: expect.stringContaining('wrong delimiter') })
    expect(v.problems[0]!.problem).toContain('":"')
    const forced = await check('code;period;filings\nAA-01;2020-01;5\n', { ...long, delimiter: ',' })
    expect(forced.problems[0]!.problem).toContain('separated by ";"')
    const auto = await check('code;period;filings\nAA-01;2020-01;5\n', long)
    expect(auto.ok).toBe(true)
  })

  it('names a missing column and lists the ones there are', async () => {
    const v = await check('code,month,filings\nAA-01,2020-01,5\n', long)
    expect(v.problems).toEqual([{ row: 1, column: 'period', problem: 'No column "period" in the file; its columns are: "code", "month", "filings".' }])
  })

  it('refuses an empty file and a file of blank lines', async () => {
    await expect(check('', long)).rejects.toThrow(UploadError)
    await expect(check('\n\n  \n', long)).rejects.toThrow(/no data/)
  })

  it('says when there is nothing to import', async () => {
    const v = await check('code,period,filings\n', long)
    expect(v.problems).toEqual([{ row: null, column: null, problem: 'The file holds no values to import.' }])
  })
})

describe('long layout with a measure column', () => {
  it('checks each row against its own measure', async () => {
    const v = await check('unit,when,what,value\nAA-01,2020-01,filings,3\nAA-01,2020,income,40000\nAA-01,2020-01,income,1\nAA-01,2020-01,height,1\n',
      { layout: 'long', jurisdiction: 'unit', period: 'when', measure: 'what', value: 'value' })
    expect(v.problems).toEqual([
      { row: 4, column: 'when', problem: '"2020-01" is a month, but the measure is recorded by year.' },
      { row: 5, column: 'what', problem: 'Unknown measure "height": add it under Measures first.' },
    ])
  })
})

describe('wide layout', () => {
  it('reads one column per period, XLSX date headers as the measure\'s periods', async () => {
    const wb = new ExcelJS.Workbook()
    const ws = wb.addWorksheet('data')
    ws.addRow(['code', 'name', new Date(Date.UTC(2020, 0, 1)), '2020-02', '2020-03'])
    ws.addRow(['AA-01', 'First', 1, 2, 3])
    ws.addRow(['AA-02', 'Second', 4, null, 6])
    const file = Buffer.from(await wb.xlsx.writeBuffer())
    const v = await check(file, { layout: 'wide', jurisdiction: 'code', measure: 'filings', ignore: ['name'] }, 'data.xlsx')
    expect(v.ok).toBe(true)
    expect(v.summary).toMatchObject({ observations: 5, blanks: 1, firstPeriod: '2020-01', lastPeriod: '2020-03' })
  })

  it('names a header that is not a period', async () => {
    const v = await check('code,name,2020-01\nAA-01,x,1\n', { layout: 'wide', jurisdiction: 'code', measure: 'filings' })
    expect(v.problems[0]).toMatchObject({ row: 1, column: 'name', problem: expect.stringContaining('not a period') })
  })
})

describe('rates', () => {
  it('computes a derived measure per 1,000 where count and denominator are both there', async () => {
    const v = await check('code,period,filings,households\nAA-01,2020-01,5,2000\nAA-02,2020-01,3,0\nBB-01,2020-01,4,\n', {
      ...long, values: { filings: 'filings', households: 'households' },
      rates: [{ key: 'filing_rate', count: 'filings', denominator: 'households', per: 1000 }],
    })
    expect(v.ok).toBe(true)
    expect(v.newMeasures).toEqual([{ key: 'filing_rate', label: 'Eviction filings per 1,000 Renter households', unit: 'per 1,000 renter households', kind: 'outcome', frequency: 'month' }])
    const i = v.observations.measureKeys.indexOf('filing_rate')
    const rates = [...Array(v.observations.length).keys()].filter(k => v.observations.measureIndex[k] === i).map(k => v.observations.values[k])
    expect(rates).toEqual([2.5])
    expect(v.warnings).toHaveLength(2)
  })
})
