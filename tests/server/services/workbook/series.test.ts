/** Treated and comparison means by period for the report chart. */
import { describe, expect, it } from 'vitest'
import { groupSeries } from '../../../../server/services/workbook/series'

describe('groupSeries', () => {
  it('averages each group per period, skipping missing cells', () => {
    const rows = [
      { unit: 'T', period: '2001', values: { outcome: 10 } },
      { unit: 'T', period: '2002', values: { outcome: 12 } },
      { unit: 'A', period: '2001', values: { outcome: 4 } },
      { unit: 'B', period: '2001', values: { outcome: 6 } },
      { unit: 'A', period: '2002', values: { outcome: null } },
      { unit: 'B', period: '2002', values: { outcome: 8 } },
      { unit: 'A', period: '2003', values: { outcome: 1 } },
    ]
    expect(groupSeries(rows, ['T'], 'outcome')).toEqual({ periods: ['2001', '2002', '2003'], treated: [10, 12, null], comparison: [5, 8, 1] })
  })
})
