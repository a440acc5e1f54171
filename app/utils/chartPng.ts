/**
 * PNG of any chart.js chart: `downloadChartPng(chart, 'trends.png')`. The image is drawn on
 * a white background (chart.js canvases are transparent, which prints and pastes badly).
 */
import type { Chart } from 'chart.js'
import { downloadBlob } from './exportCsv'

/** A PNG data URL of the chart on white. */
export function chartToPng(chart: Pick<Chart, 'toBase64Image' | 'width' | 'height'>): Promise<string> {
  const src = chart.toBase64Image('image/png', 1)
  return new Promise((resolve, reject) => {
    const img = new Image()
    img.onload = () => {
      const canvas = document.createElement('canvas')
      canvas.width = img.naturalWidth
      canvas.height = img.naturalHeight
      const ctx = canvas.getContext('2d')
      if (!ctx) return resolve(src)
      ctx.fillStyle = '#ffffff'
      ctx.fillRect(0, 0, canvas.width, canvas.height)
      ctx.drawImage(img, 0, 0)
      resolve(canvas.toDataURL('image/png'))
    }
    img.onerror = () => reject(new Error('The chart image could not be made.'))
    img.src = src
  })
}

export async function downloadChartPng(chart: Pick<Chart, 'toBase64Image' | 'width' | 'height'>, fileName: string): Promise<void> {
  const url = await chartToPng(chart)
  const blob = await (await fetch(url)).blob()
  downloadBlob(fileName.endsWith('.png') ? fileName : `${fileName}.png`, blob)
}
