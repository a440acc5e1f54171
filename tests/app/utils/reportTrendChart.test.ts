/**
 * The report's trend chart: a single series draws no comparison legend entry, the policy start
 * and later interventions become marks at their periods, and a long axis title is wrapped.
 * Small invented series; the answers are known by construction.
 */
import { describe, expect, it } from 'vitest'
import { trendChart, wrapTitle } from '../../../app/utils/reportCharts'

const periods = ['2019-01', '2019-02', '2019-03', '2019-04']

describe('trendChart', () => {
  it('leaves out the comparison line and the legend when there are no comparison units', () => {
    const c = trendChart({ periods, treated: [1, 2, 3, 4], comparison: [null, null, null, null] }, 'outcome')
    expect(c.data.datasets.map(d => d.label)).toEqual(['Treated jurisdiction'])
    expect(c.options?.plugins?.legend?.display).toBe(false)
  })

  it('keeps both lines with a comparison, and places marks only at periods on the axis', () => {
    const c = trendChart({ periods, treated: [1, 2, 3, 4], comparison: [1, 1, 2, 2] }, 'outcome', [{ period: '2019-03', label: 'start' }, { period: '2030-01', label: 'later' }])
    expect(c.data.datasets.map(d => d.label)).toEqual(['Treated', 'Comparison mean'])
    expect(c.plugins).toHaveLength(1)
    // the plugin draws at the mark's index: call it with a stub chart and record the x pixels asked for
    const asked: number[] = []
    const noop = () => {}
    const ctx = { save: noop, restore: noop, beginPath: noop, moveTo: noop, lineTo: noop, stroke: noop, fillText: noop, setLineDash: noop }
    const chart = { scales: { x: { getPixelForValue: (i: number) => { asked.push(i); return i * 10 } } }, chartArea: { top: 0, bottom: 100 }, ctx }
    ;(c.plugins![0]!.afterDatasetsDraw as unknown as (chart: unknown) => void)(chart)
    expect(asked).toEqual([2])
  })
})

describe('wrapTitle', () => {
  it('keeps a short title and splits a long one into lines within the width', () => {
    expect(wrapTitle('outcome')).toBe('outcome')
    const lines = wrapTitle('Recorded burglaries (burglaries, count) per 1,000 households', 30) as string[]
    expect(lines.length).toBeGreaterThan(1)
    expect(lines.every(l => l.length <= 30)).toBe(true)
    expect(lines.join(' ')).toBe('Recorded burglaries (burglaries, count) per 1,000 households')
  })
})
