/**
 * Calibration and placebo speed (DESIGN.md, "Quality bars": on placebo units of real panels
 * about 5% of the default 95% intervals exclude zero, for every design).
 * - Fatalities (the public panel of the shared checks, a1: 48 US states x 1982-1988): every
 *   state in turn a fake single adopter in 1985 against the other 47, with the default spec of
 *   did, event_study and synthetic; the analytic (cluster-robust) did for contrast.
 * - Produc (the shared checks' c2 panel, 48 states x 1970-1986, log output): fake adopters in 1979.
 * - The demo (invented): each of the 55 municipalities that adopted nothing a fake adopter in
 *   2017-07 against the other 54, did and comparative ITS.
 * - Speed: placebo in space with 100 comparison units on a 101-unit x 156-month panel.
 * Each calibration figure is the time of the whole loop; its name carries the share.
 */
import { readFileSync } from 'node:fs'
import path from 'node:path'
import { fileURLToPath } from 'node:url'
import { estimate, recordsFromCsv } from '../server/engine/index'
import type { EstimateResult } from '../shared/engine/result'
import type { SpecInput } from '../shared/engine/spec'
import { ADOPTED, FIRST_ADOPTER, LATER_ADOPTERS, RELATED_ADOPTER, demoRows } from '../db/seed/demoScenario'
import { type BenchFigure, medianMs } from './index'

const here = path.dirname(fileURLToPath(import.meta.url))
const excludesZero = (r: EstimateResult) => (r.effect.ciLow !== null && r.effect.ciLow > 0) || (r.effect.ciHigh !== null && r.effect.ciHigh < 0)

function calibrate(label: string, input: Parameters<typeof estimate>[0], units: string[], spec: (fake: string, others: string[]) => SpecInput): BenchFigure {
  const t0 = performance.now()
  let out = 0
  for (const u of units) if (excludesZero(estimate(input, spec(u, units.filter((x) => x !== u))))) out++
  const ms = performance.now() - t0
  return { name: `calibration, ${label}: ${out}/${units.length} (${Math.round((100 * out) / units.length)}%) of 95% intervals exclude zero`, medianMs: ms, target: null }
}

export async function run(): Promise<BenchFigure[]> {
  const figures: BenchFigure[] = []
  const fat = recordsFromCsv(readFileSync(path.join(here, '../tests/fixtures/reference/a1_fatalities_twfe_beertax/panel.csv'), 'utf8'))
  const states = [...new Set(fat.records.map((r) => String(r.unit)))].sort()
  figures.push(calibrate('Fatalities did, default', fat, states, (s, others) => ({ design: 'did', treated: [s], start: 1985, comparison: others })))
  figures.push(calibrate('Fatalities did, analytic cluster-robust (for contrast)', fat, states, (s, others) => ({ design: 'did', treated: [s], start: 1985, comparison: others, inference: { method: 'analytic' } })))
  figures.push(calibrate('Fatalities event study, default', fat, states, (s, others) => ({ design: 'event_study', treated: [s], start: 1985, comparison: others })))
  figures.push(calibrate('Fatalities weighted comparison, default', fat, states, (s, others) => ({ design: 'synthetic', treated: [s], start: 1985, comparison: others })))

  // Produc (the shared checks' c2 panel: 48 US states x 1970-1986, log gross state product)
  const produc = recordsFromCsv(readFileSync(path.join(here, '../tests/fixtures/reference/c2_produc_wild_cluster_bootstrap/panel.csv'), 'utf8'))
  const pstates = [...new Set(produc.records.map((r) => String(r.unit)))].sort()
  figures.push(calibrate('Produc did, default', produc, pstates, (s, others) => ({ design: 'did', treated: [s], start: 1979, comparison: others })))
  figures.push(calibrate('Produc did, analytic cluster-robust (for contrast)', produc, pstates, (s, others) => ({ design: 'did', treated: [s], start: 1979, comparison: others, inference: { method: 'analytic' } })))
  figures.push(calibrate('Produc weighted comparison, default', produc, pstates, (s, others) => ({ design: 'synthetic', treated: [s], start: 1979, comparison: others })))

  const adopters = new Set([FIRST_ADOPTER, ...LATER_ADOPTERS.map((a) => a.code), RELATED_ADOPTER])
  const rows = demoRows().map((r) => ({ unit: r.code, period: r.period, values: { outcome: r.rate } }))
  const never = [...new Set(rows.map((r) => r.unit))].filter((u) => !adopters.has(u)).sort()
  figures.push(calibrate('demo did, default', { rows }, never, (u, others) => ({ design: 'did', treated: [u], start: ADOPTED, comparison: others })))
  figures.push(calibrate('demo did, analytic cluster-robust (for contrast)', { rows }, never, (u, others) => ({ design: 'did', treated: [u], start: ADOPTED, comparison: others, inference: { method: 'analytic' } })))
  figures.push(calibrate('demo comparative ITS (pool mean), default', { rows }, never, (u, others) => ({ design: 'its', treated: [u], comparison: others, its: { breaks: [ADOPTED], seasonality: 'month', comparison: 'mean', hacLag: 12 } })))

  // placebo in space: 101 units x 156 months, one treated, 100 comparison units
  const big = []
  let seed = 12345
  const noise = () => ((seed = (seed * 16807) % 2147483647) / 2147483647 - 0.5)
  for (let u = 0; u < 101; u++) {
    const level = 10 + 5 * noise()
    for (let t = 0; t < 156; t++) {
      const period = `${2012 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}`
      big.push({ unit: `u${String(u).padStart(3, '0')}`, period, values: { outcome: level + 0.01 * t + noise() + (u === 0 && t >= 100 ? -1 : 0) } })
    }
  }
  const bigSpec = { design: 'did' as const, treated: ['u000'], start: '2020-05' }
  figures.push({ name: 'placebo in space: 100 comparison units, 101 units x 156 months (did)', medianMs: await medianMs(() => estimate({ rows: big }, bigSpec), 5), target: 500 })
  return figures
}
