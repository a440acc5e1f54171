/**
 * Workbook figure: the estimates workbook of a run on 500 units x 240 months (120,000 panel
 * rows, an outcome and a covariate) built in memory, as the download route does. Target:
 * under 10 s on this 2-core machine (the streaming writer keeps memory low as well).
 */
import { estimate } from '../server/engine'
import { buildWorkbook, type WorkbookInput } from '../server/services/workbook/build'
import { medianMs } from './index'

const UNITS = 500
const MONTHS = 240

function input(): WorkbookInput {
  const rows: WorkbookInput['rows'] = []
  for (let u = 0; u < UNITS; u++) {
    for (let t = 0; t < MONTHS; t++) {
      const period = `${1990 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}`
      rows.push({ unit: `U${String(u).padStart(4, '0')}`, period, values: { outcome: Math.sin(u + t) + t * 0.01 + (u === 0 && t >= 120 ? -1 : 0), cov: Math.cos(u * t) } })
    }
  }
  const spec = { design: 'did' as const, treated: ['U0000'], start: '2000-01' }
  return {
    study: { id: 1, title: 'Benchmark study', question: null, outcome: 'outcome', transform: 'level', treated: ['U0000'], start: '2000-01', window: null, covariates: [], status: 'draft', version: 1 },
    run: { id: 1, design: 'did', spec, fingerprint: 'bench', result: estimate({ rows }, spec), createdAt: new Date(), createdBy: null },
    pool: [], rows, validity: [], releases: [],
    software: { name: 'Counterpart', version: 'bench' },
    generated: { at: new Date(), by: 'bench' },
  }
}

export async function run(): Promise<{ name: string, medianMs: number, target: number | null }[]> {
  const data = input()
  return [{ name: `estimates workbook, ${UNITS * MONTHS} panel rows`, medianMs: await medianMs(() => buildWorkbook(data), 3), target: 10_000 }]
}
