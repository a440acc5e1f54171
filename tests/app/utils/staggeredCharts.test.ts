// Series and chart configurations for staggered adoption and the two-by-two decomposition:
// invented numbers whose answer is known by construction.
import { describe, expect, it } from 'vitest'
import type { DecompositionRow, GroupTimeCell } from '../../../shared/engine/result'
import { cohortLines, cohortRows, decompositionCaption, decompositionGroups, decompositionSummary, eventTimeSeries, periodOrder } from '../../../app/utils/staggeredCharts'
import { decompositionChart, eventTimeChart, groupTimeChart, KIND_SHAPES, REPORT_STAGGERED_PALETTE } from '../../../app/utils/reportCharts'

/** Two cohorts: "2004" (2 units) over 2002..2005 and "2005" (1 unit) over 2003..2005; base cells att 0. */
const cell = (cohort: string, period: string, att: number, nCohort: number): GroupTimeCell => {
  const relTime = Number(period) - Number(cohort)
  return { cohort, period, relTime, att, se: relTime === -1 ? 0 : 0.1, nCohort, nComparison: 4, post: relTime >= 0 }
}
const cells: GroupTimeCell[] = [
  cell('2005', '2003', 0.2, 1), cell('2005', '2004', 0, 1), cell('2005', '2005', -3, 1),
  cell('2004', '2002', 0.1, 2), cell('2004', '2003', 0, 2), cell('2004', '2004', -1, 2), cell('2004', '2005', -2, 2),
]

const byRelTime = [
  { relTime: 1, estimate: -2, se: 0.1, bandLow: -2.3, bandHigh: -1.7 },
  { relTime: -1, estimate: 0, se: 0, bandLow: 0, bandHigh: 0 },
  { relTime: 0, estimate: -5 / 3, se: 0.1 },
  { relTime: -2, estimate: 0.15, se: 0.1, bandLow: -0.2, bandHigh: 0.5 },
]

// Weights 0.5 + 0.25 + 0.25 = 1; weighted sum 0.5(-2) + 0.25(-1) + 0.25(1) = -1;
// already-treated weight 0.25 of 1.
const rows: DecompositionRow[] = [
  { type: 'treated_vs_never', treated: '2004', control: 'never', estimate: -2, weight: 0.5 },
  { type: 'later_vs_earlier', treated: '2005', control: '2004', estimate: 1, weight: 0.25 },
  { type: 'earlier_vs_later', treated: '2004', control: '2005', estimate: -1, weight: 0.25 },
]

describe('event time series', () => {
  it('sorts by relative time, finds the reference and adoption, keeps a missing band as a gap', () => {
    const s = eventTimeSeries(byRelTime)
    expect(s.relTimes).toEqual([-2, -1, 0, 1])
    expect(s.labels).toEqual(['-2', '-1', '0', '1'])
    expect(s.estimate).toEqual([0.15, 0, -5 / 3, -2])
    expect(s.low).toEqual([-0.2, 0, null, -2.3])
    expect(s.high).toEqual([0.5, 0, null, -1.7])
    expect(s.referenceIndex).toBe(1)
    expect(s.adoptionIndex).toBe(2)
    expect(s.hasBand).toBe(true)
  })
  it('is empty and bandless without points', () => {
    const s = eventTimeSeries([])
    expect(s).toMatchObject({ relTimes: [], labels: [], referenceIndex: -1, adoptionIndex: -1, hasBand: false })
    expect(eventTimeSeries(null).labels).toEqual([])
    expect(eventTimeSeries([{ relTime: 0, estimate: 1, se: 0.1 }]).hasBand).toBe(false)
  })
})

describe('cohort lines', () => {
  it('over relative time: cohorts in adoption order, each value at its own e = t - g', () => {
    const { labels, lines } = cohortLines(cells)
    expect(labels).toEqual(['-2', '-1', '0', '1'])
    expect(lines.map(l => l.cohort)).toEqual(['2004', '2005'])
    expect(lines.map(l => l.label)).toEqual(['Adopted 2004 (2 units)', 'Adopted 2005 (1 unit)'])
    expect(lines[0]!.values).toEqual([0.1, 0, -1, -2])
    expect(lines[1]!.values).toEqual([0.2, 0, -3, null])
    expect(lines[0]!.post).toEqual([false, false, true, true])
    expect(lines[1]!.se).toEqual([0.1, 0, 0.1, null])
  })
  it('over calendar periods: the same cells placed at their periods', () => {
    const { labels, lines } = cohortLines(cells, 'period')
    expect(labels).toEqual(['2002', '2003', '2004', '2005'])
    expect(lines[0]!.values).toEqual([0.1, 0, -1, -2])
    expect(lines[1]!.values).toEqual([null, 0.2, 0, -3])
    expect(lines[1]!.post).toEqual([false, false, false, true])
  })
  it('orders periods as periods, not as text', () => {
    expect(['10', '9', '-1'].sort(periodOrder)).toEqual(['-1', '9', '10'])
    expect(['2001-Q3', '2000-Q4', '2001-Q1'].sort(periodOrder)).toEqual(['2000-Q4', '2001-Q1', '2001-Q3'])
    expect(cohortLines([], 'period')).toEqual({ labels: [], lines: [] })
  })
  it('cohort rows carry each cohort size, in adoption order', () => {
    const staggered = { groupTime: cells, byCohort: [{ cohort: '2005', estimate: -3, se: 0.1 }, { cohort: '2004', estimate: -1.5, se: 0.2 }] }
    expect(cohortRows(staggered)).toEqual([{ cohort: '2004', estimate: -1.5, se: 0.2, units: 2 }, { cohort: '2005', estimate: -3, se: 0.1, units: 1 }])
    expect(cohortRows(null)).toEqual([])
  })
})

describe('decomposition', () => {
  it('sums the weights, forms the weighted sum and each kind\'s total', () => {
    const s = decompositionSummary(rows)
    expect(s.weightSum).toBe(1)
    expect(s.weightedSum).toBe(-1)
    expect(s.byType.treated_vs_never).toEqual({ count: 1, weight: 0.5, estimate: -2 })
    expect(s.byType.later_vs_earlier).toEqual({ count: 1, weight: 0.25, estimate: 1 })
    expect(s.alreadyTreatedShare).toBe(0.25)
    expect(decompositionSummary([])).toMatchObject({ weightSum: 0, weightedSum: 0, alreadyTreatedShare: 0 })
    expect(decompositionSummary([]).byType.earlier_vs_later.estimate).toBeNull()
  })
  it('groups the points by kind in a fixed order and names each comparison', () => {
    const g = decompositionGroups(rows)
    expect(g.map(x => x.type)).toEqual(['treated_vs_never', 'earlier_vs_later', 'later_vs_earlier'])
    expect(g[0]!.points).toEqual([{ x: 0.5, y: -2, label: '2004 against never treated' }])
    expect(g[2]!.points).toEqual([{ x: 0.25, y: 1, label: '2005 against 2004' }])
    expect(decompositionGroups(rows.slice(0, 1)).map(x => x.type)).toEqual(['treated_vs_never'])
  })
  it('says how much weight the already-treated comparisons carry', () => {
    expect(decompositionCaption(rows)).toBe('The two-way estimate −1.000 is the weighted sum of 3 two-by-two comparisons. Comparisons against already-treated units carry 25.0% of the weight (1 comparison, weighted estimate 1.000); when effects grow or fade over time they can pull the two-way estimate away from any average effect.')
    expect(decompositionCaption(rows.slice(0, 1))).toBe('The two-way estimate −1.000 is the weighted sum of 1 two-by-two comparison. None of them uses already-treated units as the comparison.')
    expect(decompositionCaption([])).toBe('No two-by-two comparisons to show.')
  })
})

describe('chart configurations', () => {
  it('event time: band above the estimate, the reference a diamond, pre-adoption points grey', () => {
    const c = eventTimeChart(byRelTime, { level: 0.9 })
    expect(c.type).toBe('line')
    expect(c.data.labels).toEqual(['-2', '-1', '0', '1'])
    const [high, low, est, zero] = c.data.datasets
    expect(high!.label).toBe('90% simultaneous band')
    expect(high!.data).toEqual([0.5, 0, null, -1.7])
    expect(high!.fill).toBe('+1')
    expect(low!.data).toEqual([-0.2, 0, null, -2.3])
    expect(est!.data).toEqual([0.15, 0, -5 / 3, -2])
    expect(est!.pointStyle).toEqual(['circle', 'rectRot', 'circle', 'circle'])
    expect(est!.pointBackgroundColor).toEqual([REPORT_STAGGERED_PALETTE.pre, REPORT_STAGGERED_PALETTE.pre, REPORT_STAGGERED_PALETTE.estimate, REPORT_STAGGERED_PALETTE.estimate])
    expect(zero!.data).toEqual([0, 0, 0, 0])
  })
  it('event time without a band or points: the estimate and zero only', () => {
    expect(eventTimeChart([{ relTime: 0, estimate: 1, se: 0.1 }]).data.datasets.map(d => d.label)).toEqual(['Estimate', '_zero'])
    const empty = eventTimeChart([])
    expect(empty.data.labels).toEqual([])
    expect(empty.data.datasets.map(d => d.data)).toEqual([[], []])
  })
  it('group time: one line per cohort in the palette\'s order, then zero', () => {
    const c = groupTimeChart(cells)
    expect(c.data.datasets.map(d => d.label)).toEqual(['Adopted 2004 (2 units)', 'Adopted 2005 (1 unit)', '_zero'])
    expect(c.data.datasets.map(d => d.borderColor)).toEqual([REPORT_STAGGERED_PALETTE.cohorts[0], REPORT_STAGGERED_PALETTE.cohorts[1], REPORT_STAGGERED_PALETTE.zero])
    expect(c.data.datasets[1]!.data).toEqual([0.2, 0, -3, null])
    expect(groupTimeChart(cells, { axis: 'period' }).data.labels).toEqual(['2002', '2003', '2004', '2005'])
    expect(groupTimeChart([]).data.datasets.map(d => d.label)).toEqual(['_zero'])
  })
  it('decomposition: one dataset per kind with its shape, and the two-way estimate as a flat line', () => {
    const c = decompositionChart(rows)
    expect(c.type).toBe('scatter')
    const ds = c.data.datasets
    expect(ds.map(d => d.pointStyle)).toEqual([KIND_SHAPES.treated_vs_never, KIND_SHAPES.earlier_vs_later, KIND_SHAPES.later_vs_earlier, 'line'])
    expect(ds[3]!.label).toBe('Two-way estimate −1.000')
    expect((ds[3]!.data as { x: number, y: number }[]).map(p => [p.x, p.y])).toEqual([[0, -1], [0.5 * 1.05, -1]])
    expect(decompositionChart([]).data.datasets).toHaveLength(1)
    expect(decompositionChart([]).data.datasets[0]!.data).toEqual([])
  })
})
