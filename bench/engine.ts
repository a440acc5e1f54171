/**
 * Engine benchmarks (DESIGN.md, "Quality bars"), on synthetic panels from a fixed seed:
 * - donor ranking: 3,000 candidates against one treated unit over 120 pre-periods (panel in
 *   memory, as the server holds it for a study); target well under 0.1 s
 * - two-way fixed effects with CR1 clustered errors on 3,000 units x 240 periods, from
 *   typed rows (panel build included); target about a second
 * - event study on 500 units x 60 periods with 12 leads and 12 lags, staggered starts,
 *   from typed rows
 * - wild cluster bootstrap: two-way fixed effects on 3,000 units x 240 periods, 50 clusters
 *   of 60 units, 9,999 Rademacher draws and the interval by test inversion; the time after
 *   the fit (target under a second) and, for reference, the fit itself
 * - weighted comparison: simplex weights for 100 donors x 120 pre-periods (target 50 ms),
 *   and the whole design on 101 units x 130 periods with the weights re-fitted for every
 *   donor as a placebo (target 3 s)
 * - staggered adoption on 3,000 units x 240 periods with 20 cohorts of 100 units (1,000 never
 *   treated): every group-time effect with its influence-function SE and the aggregates
 *   (target under a second); for reference the whole design from a built panel with bands
 *   from 999 multiplier draws, and the bands alone at the default 9,999 draws
 * - the two-way decomposition (Goodman-Bacon 2021) on the same panel (target under a second)
 * Follows the contract of bench/index.ts.
 */
import { buildPanel } from '../server/engine/panel'
import { estimate, parseSpec } from '../server/engine/index'
import { scoreDonorsOnPanel } from '../server/engine/donorScores'
import { prepareWildBootstrap, runWildBootstrap, type WildBootstrapModel } from '../server/engine/inference/wildClusterBootstrap'
import { fitLinearModel } from '../server/engine/regression'
import { fitSimplexWeights } from '../server/engine/synthWeights'
import { groupTimeEffects, supTCritical } from '../server/engine/designs/staggered'
import { baconDecomposition } from '../server/engine/bacon'
import type { TypedRow } from '../server/engine/panel'
import { type BenchFigure, medianMs } from './index'
import { uniforms } from './uniforms'

function panelRows(nUnits: number, nPeriods: number, start: (u: number) => number | null, seed: number): TypedRow[] {
  const r = uniforms(seed)
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

  // wild cluster bootstrap on the TWFE panel above (rows are unit-major), clusters of 60 units
  const n = twfeRows.length
  const wcb: WildBootstrapModel = {
    y: Float64Array.from(twfeRows, (row) => row.values.outcome as number),
    terms: [{ name: 'treatment', values: Float64Array.from(twfeRows, (_, i) => (Math.floor(i / 240) < 300 && (i % 240) + 1 >= 121 ? 1 : 0)) }],
    test: 'treatment',
    intercept: false,
    absorb: { unit: Int32Array.from({ length: n }, (_, i) => Math.floor(i / 240)), nUnits: 3000, period: Int32Array.from({ length: n }, (_, i) => i % 240), nPeriods: 240 },
    cluster: Int32Array.from({ length: n }, (_, i) => Math.floor(i / (240 * 60))),
    nClusters: 50,
    smallSample: 'nested',
  }
  const wcbFit = () => fitLinearModel({ ...wcb, covariance: { kind: 'cluster', cluster: wcb.cluster, nClusters: wcb.nClusters, smallSample: wcb.smallSample } })
  const fitted = wcbFit()
  const wcbOptions = { draws: 9999, weights: 'rademacher' as const, seed: 1, level: 0.95 }
  figures.push({
    name: 'wild cluster bootstrap after the fit: 50 clusters, 9,999 draws, interval',
    medianMs: await medianMs(() => runWildBootstrap(prepareWildBootstrap(wcb, fitted), wcbOptions), 5),
    target: 1000,
  })
  figures.push({ name: '  (for reference: the fit, two-way FE + CR1 on the same 720,000 rows)', medianMs: await medianMs(wcbFit, 5), target: null })

  // weighted comparison: unit 0 treated from period 121, the other 100 units are donors
  const synthRows = panelRows(101, 130, (u) => (u === 0 ? 121 : null), 4)
  const synthPre = (u: number) => Float64Array.from(synthRows.slice(u * 130, u * 130 + 120), (row) => row.values.outcome as number)
  const synthTarget = synthPre(0)
  const synthPool = Array.from({ length: 100 }, (_, j) => synthPre(j + 1))
  figures.push({ name: 'synthetic weights 100 donors x 120 pre', medianMs: await medianMs(() => fitSimplexWeights(synthTarget, synthPool), 15), target: 50 })
  const synthSpec = { design: 'synthetic', treated: ['u0000'], start: 121 }
  figures.push({ name: 'synthetic with placebo refits for every donor (100 donors, 130 periods)', medianMs: await medianMs(() => estimate({ rows: synthRows }, synthSpec), 3), target: 3000 })

  // staggered adoption: cohorts of 100 units first treated in periods 100, 105, ..., 195
  const sgN = 3000
  const sgT = 240
  const sgStart = (u: number) => (u < 2000 ? 100 + 5 * (u % 20) : null)
  const sgRows = panelRows(sgN, sgT, sgStart, 6)
  const sgY = Float64Array.from(sgRows, (row) => row.values.outcome as number)
  const sgStarts = Float64Array.from({ length: sgN }, (_, u) => sgStart(u) ?? NaN)
  const sgOrdinals = Float64Array.from({ length: sgT }, (_, t) => t + 1)
  const sgInput = { y: sgY, nUnits: sgN, nPeriods: sgT, periodOrdinals: sgOrdinals, start: sgStarts, comparison: 'never' as const }
  figures.push({ name: 'staggered group-time effects: 3,000 units x 240 periods, 20 cohorts', medianMs: await medianMs(() => groupTimeEffects(sgInput), 5), target: 1000 })
  const sgPanel = buildPanel({ rows: sgRows }, { unit: 'unit', period: 'period', numeric: ['outcome'] })
  const sgMap = Object.fromEntries(Array.from({ length: 2000 }, (_, u) => [`u${String(u).padStart(4, '0')}`, sgStart(u)!]))
  const sgSpec = { design: 'staggered', treated: Object.keys(sgMap), start: sgMap, inference: { draws: 999 } }
  figures.push({ name: '  (the whole design from a built panel, bands from 999 draws)', medianMs: await medianMs(() => estimate(sgPanel, sgSpec), 3), target: null })
  const sgGt = groupTimeEffects(sgInput)
  const sgSe = sgGt.byRelTime.map((b) => b.se)
  figures.push({
    name: '  (the bands alone, 9,999 multiplier draws over 335 relative times)',
    medianMs: await medianMs(() => supTCritical(sgGt.relTimeInfluence, sgN, sgSe, { draws: 9999, seed: 1, level: 0.95 }), 1),
    target: null,
  })
  const bcInput = {
    y: sgY,
    unit: Int32Array.from(sgRows, (_, i) => Math.floor(i / sgT)),
    nUnits: sgN,
    period: Int32Array.from(sgRows, (_, i) => i % sgT),
    nPeriods: sgT,
    start: sgStarts.map((s) => s - 1),
  }
  figures.push({ name: 'two-way decomposition: 3,000 units x 240 periods, 20 timing groups', medianMs: await medianMs(() => baconDecomposition(bcInput), 5), target: 1000 })
  return figures
}
