// The typed CSV reader (server/engine/csvTable.ts) against the record reader (csv.ts,
// papaparse): the same fields, numbers and results on every reference panel of
// tests/fixtures/reference, and on small invented files whose reading is known by
// construction (quotes, line ends, blank lines, number forms).
import { readdirSync, readFileSync } from 'node:fs'
import path from 'node:path'
import { describe, expect, it } from 'vitest'
import { recordsFromCsv } from '../../server/engine/csv'
import { fieldText, tableFromCsv, tableNumbers } from '../../server/engine/csvTable'
import { estimate } from '../../server/engine/estimate'
import { buildPanel } from '../../server/engine/panel'
import type { CsvRecord } from '../../server/engine/panel'
import { readNumber } from '../../server/engine/readNumber'
import { fails, loadCase, referenceDir } from './helpers'

/** Every field and every number of the table equal what the record reader gives. */
function sameAsRecords(text: string): number {
  const { table } = tableFromCsv(text)
  const { records } = recordsFromCsv(text) as { records: CsvRecord[] }
  expect(table.nRows).toBe(records.length)
  if (records.length) expect(table.header).toEqual(Object.keys(records[0]))
  table.header.forEach((name, j) => {
    const { values, bad } = tableNumbers(table, j)
    for (let i = 0; i < table.nRows; i++) {
      const cell = records[i][name] as string
      expect(fieldText(table, i, j)).toBe(cell)
      const v = readNumber(cell)
      if (v === undefined) expect(bad?.[i], `${name} row ${i}`).toBe(1)
      else expect(Object.is(values[i], v), `${name} row ${i}: ${cell} read as ${values[i]}, expected ${v}`).toBe(true)
    }
  })
  return table.nRows
}

describe('tableFromCsv reads as the record reader does', () => {
  for (const name of readdirSync(referenceDir).filter((d) => !d.includes('.')).sort()) {
    it(`reference panel ${name}`, () => {
      expect(sameAsRecords(readFileSync(path.join(referenceDir, name, 'panel.csv'), 'utf8'))).toBeGreaterThan(0)
    })
  }

  it('quotes, CRLF, a byte-order mark, blank lines and number forms (invented)', () => {
    const text = '\ufeffunit,period,"out ""x""",note\r\n' +
      'a,1,1e3,"x, y"\r\n' +
      '\r\n' +
      'a,2, 2 ,"line\r\nbreak"\r\n' +
      ',,,\r\n' +
      'b,1,NA,""\r\n' +
      'b,2,.,plain\r\n' +
      'c,1,-.5,+3\r\n' +
      'c,2,1.,0001.50\r\n' +
      'd,1,12345678901234567,0.1234567890123456789\r\n' +
      'd,2,"7",-0\r\n' +
      'e,1,1e400,abc\r\n' +
      'e,2,+,-\r\n' +
      'f,1,1.2.3,0.000000000000000000000000123'
    expect(sameAsRecords(text)).toBe(11)
    const { table } = tableFromCsv(text)
    expect(table.header[2]).toBe('out "x"')
    expect(fieldText(table, 1, 3)).toBe('line\r\nbreak')
    expect(Array.from(table.line)).toEqual([2, 4, 7, 8, 9, 10, 11, 12, 13, 14, 15])
  })

  it('LF and CR-only line ends, no final line end (invented)', () => {
    expect(sameAsRecords('u,p,y\nA,1,0.1\nA,2,0.2\n')).toBe(2)
    expect(sameAsRecords('u,p,y\rA,1,0.1\rA,2,0.2')).toBe(2)
    expect(sameAsRecords('u,p,y\n\n\nA,1,3\n   \n')).toBe(1)
  })

  it('gives the same estimate as the record reader (reference case a1_fatalities_twfe_beertax)', () => {
    const text = readFileSync(path.join(referenceDir, 'a1_fatalities_twfe_beertax/panel.csv'), 'utf8')
    const spec = { design: 'did', treatmentColumn: 'beertax' }
    expect(estimate(tableFromCsv(text), spec)).toEqual(estimate(loadCase('a1_fatalities_twfe_beertax').panel, spec))
  })
})

describe('tableFromCsv units and periods (dictionary codes)', () => {
  it('builds the same panel as the records: padded and quoted unit names, periods written two ways (invented)', () => {
    const lines = ['unit,period,y']
    for (let i = 0; i < 3000; i++) lines.push(`${['a', ' a', '"a"', 'b ', '"b,1"', `u${i % 700}`][i % 6]},${i % 2 ? ' ' : ''}${1990 + (i % 40)},${i}`)
    // a few thousand distinct texts make the code table grow several times
    for (let i = 0; i < 5000; i++) lines.push(`v${i},2001,${i}`)
    const text = `${lines.join('\n')}\n`
    const cols = { unit: 'unit', period: 'period', numeric: ['y'] }
    const fromRecords = () => buildPanel(recordsFromCsv(text), cols)
    const fromTable = () => buildPanel(tableFromCsv(text), cols)
    // duplicates (a/" a"/"a" share periods) are refused the same way by both readers
    let recordError = ''
    try {
      fromRecords()
    } catch (e) {
      recordError = (e as Error).message
    }
    expect(recordError).toMatch(/duplicate rows for unit "a"/)
    fails(fromTable, 'duplicate_row', new RegExp(recordError.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')))
    const unique = `unit,period,y\n a,1990,1\n"a",1991,2\nb ,1990,3\n"b,1", 1991,4\nb,1991,5\n`
    const a = buildPanel(recordsFromCsv(unique), cols)
    const b = buildPanel(tableFromCsv(unique), cols)
    expect(b.units).toEqual(['a', 'b', 'b,1'])
    expect({ ...b, line: null }).toEqual({ ...a, line: null })
    expect(Array.from(b.line)).toEqual(Array.from(a.line))
  })
})

describe('tableFromCsv refusals', () => {
  it('an empty file', () => fails(() => tableFromCsv(' \n\n'), 'invalid_input', /the CSV file is empty/))
  it('a header without a name', () => fails(() => tableFromCsv('a,,c\n1,2,3\n'), 'invalid_input', /CSV header: column 2 has no name/))
  it('a repeated header', () => fails(() => tableFromCsv('a,b,a\n1,2,3\n'), 'invalid_input', /column "a" appears twice/))
  it('a short row, naming its line', () => fails(() => tableFromCsv('a,b,c\n1,2,3\n\n4,5\n'), 'invalid_input', /CSV line 4: 2 fields, but the header has 3/))
  it('an unterminated quote', () => fails(() => tableFromCsv('a,b\n1,"2\n3,4\n'), 'invalid_input', /CSV line 2: Quoted field unterminated/))
  it('text after a closing quote', () => fails(() => tableFromCsv('a,b\n1,"2"x\n'), 'invalid_input', /CSV line 2: Trailing quote on quoted field is malformed/))
  it('a non-numeric cell, naming line and column', () => {
    fails(() => estimate(tableFromCsv('unit,period,outcome,x\na,1,1,0\na,2,2,1\n\nb,1,oops,0\nb,2,3,0\n'), { design: 'did', treatmentColumn: 'x' }), 'non_numeric', /line 5, column "outcome": "oops" is not a number/)
  })
})
