/**
 * Engine benchmarks (DESIGN.md, "Quality bars"), on synthetic panels from a fixed seed:
 * - donor ranking: 3,000 candidates against one treated unit over 120 pre-periods (panel in
 *   memory, as the server holds it for a study); target well under 0.1 s
 * - two-way fixed effects with CR1 clustered errors on 3,000 units x 240 periods, from
 *   typed rows (panel build included); target about a second
 * - event study on 500 units x 60 periods with 12 leads and 12 lags, staggered starts,
 *   from typed rows
 * Follows the contract of bench/index.ts.
 */
import { buildPanel } from '../server/engine/panel'
import { estimate, parseSpec } from '../server/engine/index'
import { scoreDonorsOnPanel } from '../server/engine/donorScores'
import type { TypedRow } from '../server/engine/panel'
import { type BenchFigure, medianMs } from './index'

/** Small deterministic generator (mulberry32). */
function rng(seed: number): () => number {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

function panelRows(nUnits: number, nPeriods: number, start: (u: number) => number | null, seed: number): TypedRow[] {
  const r = rng(seed)
  const rows: TypedRow[] = new Array(nUnits * nPeriods)
  for (let u = 0; u < nUnits; u++) {
    const level = 50 + 10 * r()
    const trend = 0.2 * (r() - 0.5)
    const s = start(u)
    const id = `u${String(u).padStart(4, '0')}`
    for (let t = 0; t < nPeriods; t++) {
      const effect = s !== null && t + 1 >= s ? 2 : 0
      rows[u * nPeriods + t] = { unit: id, period: t + 1, values: { outcome: level + trend * t + Math.sin(t / 5) + effect + r() - 0.5 } }
    }
  }
  return rows
}

export async function run(): Promise<BenchFigure[]> {
  const figures: BenchFigure[] = []

  // donor ranking: unit 0 treated from period 121
  const donorRows = panelRows(3001, 132, (u) => (u === 0 ? 121 : null), 1)
  const donorSpec = parseSpec({ design: 'did', treated: ['u0000'], start: 121 })
  const donorPanel = buildPanel({ rows: donorRows }, { unit: 'unit', period: 'period', numeric: ['outcome'] })
  figures.push({ name: 'donor ranking: 3,000 candidates x 120 pre-periods', medianMs: await medianMs(() => scoreDonorsOnPanel(donorPanel, donorSpec), 15), target: 100 })
  figures.push({
    name: '  (for reference: building that panel from 396,132 typed rows)',
    medianMs: await medianMs(() => buildPanel({ rows: donorRows }, { unit: 'unit', period: 'period', numeric: ['outcome'] }), 5),
    target: null,
  })

  // TWFE: 300 of 3,000 units treated from period 121
  const twfeRows = panelRows(3000, 240, (u) => (u < 300 ? 121 : null), 2)
  const twfeTreated = twfeRows.filter((row, i) => i % 240 === 0 && Number(row.unit.slice(1)) < 300).map((row) => row.unit)
  const twfeSpec = { design: 'did', treated: twfeTreated, start: 121 }
  figures.push({ name: 'two-way FE + CR1 clustered: 3,000 units x 240 periods (720,000 rows)', medianMs: await medianMs(() => estimate({ rows: twfeRows }, twfeSpec), 5), target: 1000 })
  const unbalanced = twfeRows.filter((_, i) => (i * 2654435761) % 100 >= 5)
  figures.push({ name: '  (the same with 5% of cells missing: alternating projections)', medianMs: await medianMs(() => estimate({ rows: unbalanced }, twfeSpec), 3), target: null })

  // event study: 100 of 500 units treated, starts spread over periods 25-36
  const esRows = panelRows(500, 60, (u) => (u < 100 ? 25 + (u % 12) : null), 3)
  const esStart = Object.fromEntries(Array.from({ length: 100 }, (_, u) => [`u${String(u).padStart(4, '0')}`, 25 + (u % 12)]))
  const esSpec = { design: 'event_study', treated: Object.keys(esStart), start: esStart, eventWindow: { from: -12, to: 12, bin: true } }
  figures.push({ name: 'event study: 500 units x 60 periods, 12 leads and 12 lags', medianMs: await medianMs(() => estimate({ rows: esRows }, esSpec), 9), target: 1000 })
  return figures
}
