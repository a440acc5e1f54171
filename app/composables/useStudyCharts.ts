/**
 * chart.js for the study workspace: registers only the parts the Trends and Estimates
 * charts use (Filler shades bands), and a small plugin that draws a dashed vertical line at
 * each intervention period (options.plugins.periodMarks.marks = [{ index, label }]).
 */
import {
  BarController, BarElement, CategoryScale, Chart, Filler, Legend, LinearScale, LineController, LineElement, PointElement, ScatterController, Tooltip,
  type Plugin,
} from 'chart.js'
import type { StaggeredPalette } from '~/utils/reportCharts'

export interface PeriodMark { index: number, label: string }

const periodMarks: Plugin = {
  id: 'periodMarks',
  afterDatasetsDraw(chart, _args, options) {
    const marks = (options as { marks?: PeriodMark[] }).marks ?? []
    const x = chart.scales.x
    const { top, bottom } = chart.chartArea
    if (!x) return
    const ctx = chart.ctx
    ctx.save()
    ctx.strokeStyle = '#b1502b'
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
  },
}

let registered = false
export function useStudyCharts() {
  if (!registered) {
    Chart.register(LineController, LineElement, PointElement, BarController, BarElement, ScatterController, CategoryScale, LinearScale, Tooltip, Legend, Filler, periodMarks)
    registered = true
  }
}

export const STUDY_COLOURS = { treated: '#b1502b', pool: '#2d6b5f', donor: 'rgba(74, 88, 94, 0.28)', gap: '#1e2a2f', ci: 'rgba(45, 107, 95, 0.35)' }

