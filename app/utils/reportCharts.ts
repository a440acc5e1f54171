/**
 * Chart data for delivery pages (printable report, review): the treated and comparison
 * means over time with the policy start marked, the event-study estimates with their
 * 95% intervals, and for adoption at different times the event-time aggregate with its
 * simultaneous band, the group-time effects by cohort and the two-by-two comparisons of a
 * two-way estimate. Pure: returns chart.js configurations, draws nothing.
 */
import type { Chart, ChartConfiguration, Plugin, PointStyle } from 'chart.js'
import type { DecompositionRow, EventStudyPoint, GroupTimeCell, StaggeredResult } from '#shared/engine/result'
import { type DecompositionPoint, type DecompositionType, type GroupTimeAxis, cohortLines, decompositionGroups, decompositionSummary, eventTimeSeries } from './staggeredCharts'

export const CHART_COLOURS = { treated: '#b1502b', comparison: '#2d6b5f', band: 'rgba(45,107,95,0.18)', zero: '#8a9499' }

/** Draws a dashed vertical line with its label at each marked period (policy start, later interventions). */
export function drawPeriodMarks(chart: Chart, marks: readonly { index: number, label: string }[]): void {
  const x = chart.scales.x
  if (!x) return
  const { top, bottom } = chart.chartArea
  const ctx = chart.ctx
  ctx.save()
  ctx.strokeStyle = CHART_COLOURS.treated
  ctx.fillStyle = '#8e3d1f'
  ctx.setLineDash([4, 3])
  ctx.font = '11px "Source Sans 3", sans-serif'
  marks.forEach((m, k) => {
    const px = x.getPixelForValue(m.index)
    ctx.beginPath()
    ctx.moveTo(px, top)
    ctx.lineTo(px, bottom)
    ctx.stroke()
    ctx.fillText(m.label, px + 3, top + 11 + 12 * (k % 3))
  })
  ctx.restore()
}

/** The report's plugin for those marks. */
export function periodMarksPlugin(marks: readonly { index: number, label: string }[]): Plugin<'line'> {
  return {
    id: 'reportPeriodMarks',
    afterDatasetsDraw(chart) {
      drawPeriodMarks(chart, marks)
    },
  }
}

/** Splits a long axis title into lines of at most `width` characters, so it is not cut at the chart's edge. */
export function wrapTitle(text: string, width = 42): string | string[] {
  if (text.length <= width) return text
  const lines: string[] = []
  let current = ''
  for (const word of text.split(/\s+/)) {
    if (current && (current + ' ' + word).length > width) {
      lines.push(current)
      current = word
    }
    else current = current ? `${current} ${word}` : word
  }
  if (current) lines.push(current)
  return lines
}

/**
 * Treated and comparison means over time with the policy start and later interventions marked.
 * A study without comparison units (a single-series interrupted time series) draws the treated
 * series alone: no legend entry for a line that is not there.
 */
export function trendChart(series: { periods: string[], treated: (number | null)[], comparison: (number | null)[] }, label: string, marks: readonly { period: string, label: string }[] = []): ChartConfiguration<'line'> {
  const hasComparison = series.comparison.some(v => v !== null)
  const datasets: ChartConfiguration<'line'>['data']['datasets'] = [
    { label: hasComparison ? 'Treated' : 'Treated jurisdiction', data: series.treated, borderColor: CHART_COLOURS.treated, backgroundColor: CHART_COLOURS.treated, pointRadius: 2, borderWidth: 2, spanGaps: true },
  ]
  if (hasComparison) datasets.push({ label: 'Comparison mean', data: series.comparison, borderColor: CHART_COLOURS.comparison, backgroundColor: CHART_COLOURS.comparison, pointRadius: 2, borderWidth: 2, borderDash: [6, 3], spanGaps: true })
  const at = new Map(series.periods.map((p, i) => [p, i]))
  const placed = marks.filter(m => at.has(m.period)).map(m => ({ index: at.get(m.period)!, label: m.label }))
  return {
    type: 'line',
    data: { labels: series.periods, datasets },
    options: {
      animation: false,
      responsive: true,
      maintainAspectRatio: false,
      layout: { padding: { left: 4, right: 8, top: 4 } },
      plugins: { legend: { position: 'bottom', display: hasComparison } },
      scales: { x: { ticks: { maxTicksLimit: 12 } }, y: { title: { display: true, text: wrapTitle(label), font: { size: 11 } } } },
    },
    plugins: [periodMarksPlugin(placed)],
  }
}

export function eventStudyChart(points: readonly EventStudyPoint[]): ChartConfiguration<'line'> {
  const labels = points.map(p => (p.bin === '<=' ? `≤${p.relTime}` : p.bin === '>=' ? `≥${p.relTime}` : String(p.relTime)))
  return {
    type: 'line',
    data: {
      labels,
      datasets: [
        { label: '95% interval, high', data: points.map(p => p.ciHigh), borderColor: 'transparent', backgroundColor: CHART_COLOURS.band, pointRadius: 0, fill: '+1' },
        { label: '95% interval, low', data: points.map(p => p.ciLow), borderColor: 'transparent', backgroundColor: CHART_COLOURS.band, pointRadius: 0, fill: false },
        { label: 'Estimate', data: points.map(p => p.estimate), borderColor: CHART_COLOURS.treated, backgroundColor: CHART_COLOURS.treated, pointRadius: points.map(p => (p.reference ? 5 : 3)), pointStyle: points.map(p => (p.reference ? 'rectRot' : 'circle')), borderWidth: 2 },
        { label: 'Zero', data: points.map(() => 0), borderColor: CHART_COLOURS.zero, borderWidth: 1, borderDash: [2, 2], pointRadius: 0 },
      ],
    },
    options: {
      animation: false,
      responsive: true,
      maintainAspectRatio: false,
      plugins: { legend: { position: 'bottom', labels: { filter: item => item.text === 'Estimate' } } },
      scales: { x: { title: { display: true, text: 'Periods from the policy start (the diamond is the reference period)' } }, y: { title: { display: true, text: 'Effect' } } },
    },
  }
}

/** A number for reading: fixed digits, a real minus sign, a dash for missing. */
export function fmtNumber(v: number | null | undefined, digits = 3): string {
  if (v == null || !Number.isFinite(v)) return '–'
  const text = v.toFixed(digits)
  return /^-0\.?0*$/.test(text) ? text.slice(1) : text.replace(/^-/, '−')
}

export function fmtP(p: number | null | undefined): string {
  if (p == null || !Number.isFinite(p)) return '–'
  return p < 0.001 ? '< 0.001' : p.toFixed(3)
}

/** Colours of the adoption charts; the Estimates step passes its own (useStudyCharts), the report uses these. */
export interface StaggeredPalette {
  /** The estimate line, and its points after adoption. */
  estimate: string
  /** Points before adoption. */
  pre: string
  band: string
  zero: string
  /** One per cohort in adoption order, cycled. */
  cohorts: readonly string[]
  kinds: Record<DecompositionType, string>
}

export const REPORT_STAGGERED_PALETTE: StaggeredPalette = {
  estimate: CHART_COLOURS.treated,
  pre: '#6b777c',
  band: 'rgba(177,80,43,0.16)',
  zero: CHART_COLOURS.zero,
  cohorts: ['#b1502b', '#2d6b5f', '#5b4a8b', '#b88a1b', '#3d6f98', '#8e3d5a', '#6b8a3a', '#4a585e'],
  kinds: { treated_vs_never: '#2d6b5f', earlier_vs_later: '#3d6f98', later_vs_earlier: '#b1502b' },
}

/** Marker of each kind of two-by-two comparison, so the kinds differ without colour too. */
export const KIND_SHAPES: Record<DecompositionType, PointStyle> = { treated_vs_never: 'circle', earlier_vs_later: 'triangle', later_vs_earlier: 'rectRot' }

/** Names of helper datasets start with "_": kept out of the legend and the tooltips. */
const shown = (text: string | undefined) => !String(text ?? '').startsWith('_')

/**
 * The event-time aggregate of group-time effects: the estimate by periods since adoption, its
 * simultaneous band shaded (where the run has one), zero, and the reference period -1 as a diamond.
 */
export function eventTimeChart(points: StaggeredResult['byRelTime'] | null | undefined, opts: { level?: number, palette?: StaggeredPalette } = {}): ChartConfiguration<'line'> {
  const palette = opts.palette ?? REPORT_STAGGERED_PALETTE
  const s = eventTimeSeries(points)
  const level = Math.round((opts.level ?? 0.95) * 100)
  const band = s.hasBand
    ? [
        { label: `${level}% simultaneous band`, data: s.high, borderColor: 'transparent', backgroundColor: palette.band, pointRadius: 0, fill: '+1' as const },
        { label: '_band low', data: s.low, borderColor: 'transparent', backgroundColor: palette.band, pointRadius: 0, fill: false as const },
      ]
    : []
  return {
    type: 'line',
    data: {
      labels: s.labels,
      datasets: [
        ...band,
        {
          label: 'Estimate',
          data: s.estimate,
          borderColor: palette.estimate,
          backgroundColor: palette.estimate,
          pointBackgroundColor: s.relTimes.map(e => (e < 0 ? palette.pre : palette.estimate)),
          pointBorderColor: s.relTimes.map(e => (e < 0 ? palette.pre : palette.estimate)),
          pointRadius: s.relTimes.map((_, i) => (i === s.referenceIndex ? 5 : 3)),
          pointStyle: s.relTimes.map((_, i) => (i === s.referenceIndex ? 'rectRot' : 'circle')),
          borderWidth: 2,
        },
        { label: '_zero', data: s.labels.map(() => 0), borderColor: palette.zero, borderWidth: 1, borderDash: [2, 2], pointRadius: 0 },
      ],
    },
    options: {
      animation: false,
      responsive: true,
      maintainAspectRatio: false,
      interaction: { mode: 'index', intersect: false },
      plugins: {
        legend: { position: 'bottom', labels: { filter: item => shown(item.text) } },
        tooltip: {
          filter: item => shown(item.dataset.label),
          callbacks: {
            label: (item) => {
              const i = item.dataIndex
              if (item.dataset.label === 'Estimate') return `Estimate ${fmtNumber(s.estimate[i])} (SE ${fmtNumber(s.se[i])})${i === s.referenceIndex ? ', reference' : ''}`
              return `Band ${fmtNumber(s.low[i])} to ${fmtNumber(s.high[i])}`
            },
          },
        },
      },
      scales: {
        x: { title: { display: true, text: 'Periods since adoption (the diamond, −1, is the reference at 0)' } },
        y: { title: { display: true, text: 'Effect' } },
      },
    },
  }
}

/** Group-time effects ATT(g, t): one line per cohort, named by its adoption period; dashed before adoption. */
export function groupTimeChart(cells: readonly GroupTimeCell[] | null | undefined, opts: { axis?: GroupTimeAxis, palette?: StaggeredPalette } = {}): ChartConfiguration<'line'> {
  const palette = opts.palette ?? REPORT_STAGGERED_PALETTE
  const axis = opts.axis ?? 'relTime'
  const { labels, lines } = cohortLines(cells, axis)
  return {
    type: 'line',
    data: {
      labels,
      datasets: [
        ...lines.map((line, k) => {
          const colour = palette.cohorts[k % palette.cohorts.length] ?? palette.estimate
          return {
            label: line.label,
            data: line.values,
            borderColor: colour,
            backgroundColor: colour,
            pointRadius: 2.5,
            borderWidth: 2,
            spanGaps: true,
            segment: { borderDash: (ctx: { p1DataIndex: number }) => (line.post[ctx.p1DataIndex] ? undefined : [4, 3]) },
          }
        }),
        { label: '_zero', data: labels.map(() => 0), borderColor: palette.zero, borderWidth: 1, borderDash: [2, 2], pointRadius: 0 },
      ],
    },
    options: {
      animation: false,
      responsive: true,
      maintainAspectRatio: false,
      plugins: {
        legend: { position: 'bottom', labels: { filter: item => shown(item.text) } },
        tooltip: {
          filter: item => shown(item.dataset.label),
          callbacks: {
            label: (item) => {
              const line = lines[item.datasetIndex]
              return line ? `${line.label}: ${fmtNumber(line.values[item.dataIndex])} (SE ${fmtNumber(line.se[item.dataIndex])})` : ''
            },
          },
        },
      },
      scales: {
        x: { title: { display: true, text: axis === 'relTime' ? 'Periods since adoption (dashed: before adoption)' : 'Period (dashed: before adoption)' } },
        y: { title: { display: true, text: 'Effect on the cohort, ATT(g, t)' } },
      },
    },
  }
}

/**
 * The two-by-two comparisons behind a two-way estimate: each one's estimate against its
 * weight, coloured and shaped by kind, with the two-way estimate (their weighted sum) as a line.
 */
export function decompositionChart(rows: readonly DecompositionRow[] | null | undefined, opts: { palette?: StaggeredPalette } = {}): ChartConfiguration<'scatter'> {
  const palette = opts.palette ?? REPORT_STAGGERED_PALETTE
  const groups = decompositionGroups(rows)
  const summary = decompositionSummary(rows)
  const maxWeight = Math.max(0, ...(rows ?? []).map(r => r.weight))
  const line: DecompositionPoint[] = rows?.length ? [{ x: 0, y: summary.weightedSum, label: 'two-way' }, { x: maxWeight * 1.05, y: summary.weightedSum, label: 'two-way' }] : []
  return {
    type: 'scatter',
    data: {
      datasets: [
        ...groups.map(g => ({
          label: g.label,
          data: g.points,
          backgroundColor: palette.kinds[g.type],
          borderColor: palette.kinds[g.type],
          pointStyle: KIND_SHAPES[g.type],
          pointRadius: 6,
          pointHoverRadius: 8,
        })),
        { label: `Two-way estimate ${fmtNumber(summary.weightedSum)}`, data: line, borderColor: palette.zero, backgroundColor: palette.zero, borderDash: [6, 3], borderWidth: 1.5, showLine: true, pointRadius: 0, pointHoverRadius: 0, pointStyle: 'line' as const },
      ],
    },
    options: {
      animation: false,
      responsive: true,
      maintainAspectRatio: false,
      plugins: {
        legend: { position: 'bottom', labels: { usePointStyle: true } },
        tooltip: {
          filter: item => (item.raw as DecompositionPoint).label !== 'two-way',
          callbacks: { label: (item) => {
            const p = item.raw as DecompositionPoint
            return `${p.label}: estimate ${fmtNumber(p.y)}, weight ${fmtNumber(p.x)}`
          } },
        },
      },
      scales: {
        x: { min: 0, title: { display: true, text: 'Weight in the two-way estimate' } },
        y: { title: { display: true, text: 'Two-by-two estimate' } },
      },
    },
  }
}
