// Period helpers (shared/utils/periods.ts). Expected values are calendar facts checked by hand.
import { describe, expect, it } from 'vitest'
import { commonFrequency, comparePeriods, formatPeriod, parsePeriod, periodRange, seasonOf } from '../../shared/utils/periods'

describe('parsePeriod', () => {
  it('reads every accepted form into its canonical text', () => {
    expect(parsePeriod('1979')).toEqual({ frequency: 'year', canonical: '1979', ordinal: 1979 })
    expect(parsePeriod(' 12 ')).toEqual({ frequency: 'integer', canonical: '12', ordinal: 12 })
    expect(parsePeriod('-3').canonical).toBe('-3')
    expect(parsePeriod('007').canonical).toBe('7')
    expect(parsePeriod(1988).frequency).toBe('year')
    expect(parsePeriod('1979-Q2').canonical).toBe('1979-Q2')
    expect(parsePeriod('1979Q2').canonical).toBe('1979-Q2')
    expect(parsePeriod('1979q4').canonical).toBe('1979-Q4')
    expect(parsePeriod('1979-3').canonical).toBe('1979-03')
    expect(parsePeriod('1979-03-15').canonical).toBe('1979-03-15')
    expect(parsePeriod('1979-03-15T00:00:00Z').canonical).toBe('1979-03-15')
    expect(parsePeriod('2020-W53').canonical).toBe('2020-W53')
    expect(parsePeriod('1979W5').canonical).toBe('1979-W05')
  })

  it('gives consecutive ordinals across year ends', () => {
    expect(parsePeriod('1980-01').ordinal - parsePeriod('1979-12').ordinal).toBe(1)
    expect(parsePeriod('1980-Q1').ordinal - parsePeriod('1979-Q4').ordinal).toBe(1)
    expect(parsePeriod('1980-03-01').ordinal - parsePeriod('1980-02-28').ordinal).toBe(2) // leap year
    expect(parsePeriod('2021-W01').ordinal - parsePeriod('2020-W53').ordinal).toBe(1)
    expect(parsePeriod('1970-01-01').ordinal).toBe(0)
  })

  it('round-trips through formatPeriod', () => {
    for (const t of ['1979', '12', '1979-Q1', '1979-Q4', '1979-01', '1979-12', '2020-W01', '2020-W53', '2021-W52', '1979-03-15', '1969-12-31']) {
      const p = parsePeriod(t)
      expect(formatPeriod(p.frequency, p.ordinal)).toBe(t)
    }
  })

  it('throws a clear error for unreadable text', () => {
    expect(() => parsePeriod('spring')).toThrow(/cannot read "spring" as a period/)
    expect(() => parsePeriod('')).toThrow(/empty period/)
    expect(() => parsePeriod('1979-13')).toThrow(/month 13/)
    expect(() => parsePeriod('1979-02-30')).toThrow(/not a calendar date/)
    expect(() => parsePeriod('2021-W53')).toThrow(/52 ISO weeks/)
    expect(() => parsePeriod(1.5)).toThrow(/not a whole number/)
  })
})

describe('comparing and ranges', () => {
  it('sorts periods and refuses to compare different frequencies', () => {
    expect(['1979-Q3', '1978-Q4', '1979-Q1'].sort(comparePeriods)).toEqual(['1978-Q4', '1979-Q1', '1979-Q3'])
    expect(comparePeriods('1979', '12')).toBeGreaterThan(0)
    expect(() => comparePeriods('1979', '1979-01')).toThrow(/cannot compare "1979" \(year\) with "1979-01" \(month\)/)
  })

  it('lists the periods between two ends', () => {
    expect(periodRange('1979-11', '1980-02')).toEqual(['1979-11', '1979-12', '1980-01', '1980-02'])
    expect(periodRange('1979-Q4', '1980-Q1')).toEqual(['1979-Q4', '1980-Q1'])
    expect(periodRange('1982', '1984')).toEqual(['1982', '1983', '1984'])
    expect(periodRange('1980-02-28', '1980-03-01')).toEqual(['1980-02-28', '1980-02-29', '1980-03-01'])
    expect(() => periodRange('1984', '1982')).toThrow(/comes after/)
  })

  it('finds one frequency for a column', () => {
    expect(commonFrequency(['1982', '1983'])).toBe('year')
    expect(commonFrequency(['1', '2000'])).toBe('integer')
    expect(() => commonFrequency(['1982', '1982-Q1'])).toThrow(/mix frequencies/)
  })

  it('reads seasons of dated periods', () => {
    expect(seasonOf('1979-03', 'month')).toBe(3)
    expect(seasonOf('1979-03', 'quarter')).toBe(1)
    expect(seasonOf('1979-Q3', 'quarter')).toBe(3)
    expect(seasonOf('1979-11-15', 'month')).toBe(11)
    expect(() => seasonOf('1979', 'month')).toThrow(/no month of year/)
  })
})
