/** Panel rows into chart series: one line per jurisdiction, gaps as null. */
import { describe, expect, it } from 'vitest'
import { panelSeries } from '~~/app/utils/panelSeries'
import { fieldErrors, parseAttributes, splitCodes } from '~~/app/utils/forms'
import { measureCreateSchema } from '#shared/schemas/registry'

describe('panelSeries', () => {
  it('aligns every jurisdiction on the union of periods', () => {
    const out = panelSeries([
      { jurisdiction: 'A', period: '2020-02', value: 2 },
      { jurisdiction: 'A', period: '2020-01', value: 1 },
      { jurisdiction: 'B', period: '2020-03', value: 3 },
    ])
    expect(out.periods).toEqual(['2020-01', '2020-02', '2020-03'])
    expect(out.series).toEqual([{ jurisdiction: 'A', values: [1, 2, null] }, { jurisdiction: 'B', values: [null, null, 3] }])
  })
})

describe('form helpers', () => {
  it('reads attributes and code lists', () => {
    expect(parseAttributes('population=1200\ncoastal=true\nnote=old town\nbad line')).toEqual({ population: 1200, coastal: true, note: 'old town' })
    expect(splitCodes(' A, B;C  D ')).toEqual(['A', 'B', 'C', 'D'])
  })
  it('gives the shared schema\'s first message per field', () => {
    expect(fieldErrors(measureCreateSchema, { key: 'Bad Key', label: '', unit: 'x', kind: 'outcome', frequency: 'month' }))
      .toEqual({ key: 'Keys use lower-case letters, digits and "_", starting with a letter.', label: 'Enter a label.' })
  })
})
