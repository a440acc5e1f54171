/**
 * The validator's bounds and fixes, on small files whose answer is known by construction:
 * problems capped at 100 with the full count, values quoted at most 40 characters, every
 * problem of a row listed (a non-numeric value beside an unknown code or a bad period), and
 * no duplicate-key collision with 300 measures in one file.
 */
import { describe, expect, it } from 'vitest'
import { mappingSchema, type MappingInput } from '#shared/schemas/uploads'
import { readTable } from '~~/server/services/uploads/readTable'
import { problemMessage, validateTable, type MeasureInfo, type Registry } from '~~/server/services/uploads/validate'
import { CellRegister } from '~~/server/services/uploads/validate/cells'

function registryWith(measures: number): Registry {
  const m = new Map<string, MeasureInfo>()
  for (let i = 0; i < measures; i++) m.set(`m${i}`, { id: 100 + i, key: `m${i}`, label: `Measure ${i}`, unit: 'n', frequency: 'month' })
  return { jurisdictions: new Map([['AA-01', 1], ['AA-02', 2]]), measures: m }
}

async function check(text: string, mapping: MappingInput, registry = registryWith(3)) {
  const m = mappingSchema.parse(mapping)
  return validateTable(await readTable(Buffer.from(text), 'file.csv', m), m, registry)
}

describe('problem lists stay small', () => {
  it('keeps the first 100 problems and counts them all', async () => {
    const rows = Array.from({ length: 1000 }, (_, i) => `AA-01,2020-01,bad${i}`)
    const v = await check(`code,period,v\n${rows.join('\n')}\n`, { layout: 'long', jurisdiction: 'code', period: 'period', values: { v: 'm0' } })
    expect(v.problemCount).toBe(1000)
    expect(v.problems).toHaveLength(100)
    expect(v.problems[99]).toEqual({ row: 101, column: 'v', problem: '"bad99" is not a number.' })
    expect(problemMessage(v)).toMatch(/^The file has 1,000 problems; nothing was imported\. First: row 2, column "v"/)
  })

  it('quotes a long value and a long column name by their first 40 characters', async () => {
    const long = 'x'.repeat(900)
    const v = await check(`code,period,v\nAA-01,2020-01,${long}\n`, { layout: 'long', jurisdiction: 'code', period: 'period', values: { v: 'm0' } })
    expect(v.problems[0]!.problem).toBe(`"${'x'.repeat(39)}\u2026 (900 characters)" is not a number.`)
    const cols = await check(`${'c'.repeat(500)},period,v\nAA-01,2020-01,1\n`, { layout: 'long', jurisdiction: 'code', period: 'period', values: { v: 'm0' } })
    expect(cols.problems[0]!.problem.length).toBeLessThan(200)
    expect(cols.problems[0]!.problem).toContain('(500 characters)')
  })
})

describe('every problem of a row is listed', () => {
  it('a text value is reported beside an unknown code and beside a bad period', async () => {
    const v = await check('code,period,v\nAA-01,2020-01,abc\nZZ-99,2020-02,abc\nAA-02,2020-13,abc\nAA-02,2020-03,4\n', { layout: 'long', jurisdiction: 'code', period: 'period', values: { v: 'm0' } })
    expect(v.problems).toEqual([
      { row: 2, column: 'v', problem: '"abc" is not a number.' },
      { row: 3, column: 'code', problem: 'Unknown jurisdiction code "ZZ-99": add it under Jurisdictions first.' },
      { row: 3, column: 'v', problem: '"abc" is not a number.' },
      { row: 4, column: 'period', problem: expect.stringContaining('month 13') },
      { row: 4, column: 'v', problem: '"abc" is not a number.' },
    ])
  })

  it('a bad period is listed once per row, whatever the number of value columns', async () => {
    const v = await check('code,period,a,b\nAA-01,2020-13,1,x\n', { layout: 'long', jurisdiction: 'code', period: 'period', values: { a: 'm0', b: 'm1' } })
    expect(v.problems.map(p => p.column)).toEqual(['period', 'b'])
  })

  it('a measure-column file checks the value of a row with an unknown measure', async () => {
    const v = await check('code,period,measure,value\nAA-01,2020-01,nope,abc\n', { layout: 'long', jurisdiction: 'code', period: 'period', measure: 'measure', value: 'value' })
    expect(v.problems.map(p => p.column)).toEqual(['measure', 'value'])
  })
})

describe('duplicate cells with many measures', () => {
  it('300 measures in one file: no false duplicates, and a real one is still found', async () => {
    const registry = registryWith(300)
    const keys = [...registry.measures.keys()]
    const header = ['code', 'period', ...keys].join(',')
    const row = (code: string, period: string) => [code, period, ...keys.map((_, i) => String(i))].join(',')
    const good = await check(`${header}\n${row('AA-01', '2020-01')}\n${row('AA-02', '2020-01')}\n${row('AA-01', '2020-02')}\n`,
      { layout: 'long', jurisdiction: 'code', period: 'period', values: Object.fromEntries(keys.map(k => [k, k])) }, registry)
    expect(good.problems).toEqual([])
    expect(good.observations.length).toBe(900)
    expect(good.summary.measures.m299).toBe(3)
    const dup = await check(`${header}\n${row('AA-01', '2020-01')}\n${row('AA-01', '2020-01')}\n`,
      { layout: 'long', jurisdiction: 'code', period: 'period', values: Object.fromEntries(keys.map(k => [k, k])) }, registry)
    expect(dup.problemCount).toBe(300)
    expect(dup.problems[0]).toEqual({ row: 3, column: 'm0', problem: 'Duplicate: m0 for this jurisdiction and period 2020-01 is also in row 2.' })
  })

  it('the register separates slots that the old packing (jurisdiction x 256 + slot) made equal', () => {
    const r = new CellRegister()
    // jid 1, measure 256 and jid 2, measure 0 shared one key under x 256 packing.
    expect(r.firstRow(1, 256, 0, 2)).toBeUndefined()
    expect(r.firstRow(2, 0, 0, 3)).toBeUndefined()
    expect(r.firstRow(1, 256, 0, 4)).toBe(2)
    expect(r.firstRow(2 ** 31 - 1, 65_535, 2 ** 22 - 1, 5)).toBeUndefined()
  })
})
