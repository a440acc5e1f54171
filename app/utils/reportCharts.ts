/**
 * Chart data for delivery pages (printable report, review): the treated and comparison
 * means over time with the policy start marked, and the event-study estimates with their
 * 95% intervals. Pure: returns chart.js configurations, draws nothing.
 */
import type { ChartConfiguration } from 'chart.js'
import type { EventStudyPoint } from '#shared/engine/result'

export const CHART_COLOURS = { treated: '#b1502b', comparison: '#2d6b5f', band: 'rgba(45,107,95,0.18)', zero: '#8a9499' }

export function trendChart(series: { periods: string[], treated: (number | null)[], comparison: (number | null)[] }, label: string): ChartConfiguration<'line'> {
  return {
    type: 'line',
    data: {
      labels: series.periods,
      datasets: [
        { label: 'Treated', data: series.treated, borderColor: CHART_COLOURS.treated, backgroundColor: CHART_COLOURS.treated, pointRadius: 2, borderWidth: 2, spanGaps: true },
        { label: 'Comparison mean', data: series.comparison, borderColor: CHART_COLOURS.comparison, backgroundColor: CHART_COLOURS.comparison, pointRadius: 2, borderWidth: 2, borderDash: [6, 3], spanGaps: true },
      ],
    },
    options: {
      animation: false,
      responsive: true,
      maintainAspectRatio: false,
      plugins: { legend: { position: 'bottom' } },
      scales: { y: { title: { display: true, text: label } } },
    },
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
