/**
 * chart.js for the study workspace: registers only the parts the Trends and Estimates
 * charts use (Filler shades bands), and a small plugin that draws a dashed vertical line at
 * each intervention period (options.plugins.periodMarks.marks = [{ index, label }]).
 */
import {
  BarController, BarElement, CategoryScale, Chart, Filler, Legend, LinearScale, LineController, LineElement, PointElement, ScatterController, Tooltip,
  type Plugin,
} from 'chart.js'
import { drawPeriodMarks, type StaggeredPalette } from '~/utils/reportCharts'

export interface PeriodMark { index: number, label: string }

const periodMarks: Plugin = {
  id: 'periodMarks',
  afterDatasetsDraw(chart, _args, options) {
    const marks = (options as { marks?: PeriodMark[] }).marks ?? []
    drawPeriodMarks(chart, marks)
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

