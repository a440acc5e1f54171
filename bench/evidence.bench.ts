/**
 * How often the threat evidence (server/engine/threats) and the placebo in time
 * (server/engine/robustness/placeboTime.ts) cry wolf on real panels. Each unit in turn is a fake
 * single adopter at a fixed start with every other unit as its pool and candidates (true effect
 * 0 by construction), the way bench/calibration.bench.ts calibrates the inference.
 *
 * Panels (tests/fixtures/reference, sources in its README):
 * - Produc (c2: 48 US states x 1970-1986, log gross state product), fake start 1980 (10 periods
 *   before, 7 from it), neighbours = the other states of the unit's Census region (the panel's
 *   region column);
 * - Gasoline (c3: 18 OECD countries x 1960-1978, log gasoline use per car), fake start 1973
 *   (13 before, 6 from it); no geography in the panel, so no diffusion figure;
 * - Fatalities (a1: 48 US states x 1982-1988, traffic deaths per 10,000), fake start 1985
 *   (3 before, 4 from it): too short for most checks, which then say "cannot tell".
 *
 * For every rule the table gives the share of fake adopters with each verdict and the share
 * that is the error under no effect, beside what the rule is built as (its nominal rate):
 * - history: "supports" is the error (a null effect called rare among fake start dates); it needs
 *   a placebo p = (1 + hits) / (1 + n) <= 0.10, so with n fake dates exchangeable with the real
 *   one P(supports) = floor((n + 1) / 10) / (n + 1): 0 under 9 dates, hence the late starts
 *   (Produc 1984: 9 dates, Gasoline 1975: 10). "Weakens" is the right reading of a null effect
 *   (about 75% when exchangeable).
 * - maturation: "weakens" (a 5% t test of the gap's pre-period slope, independent errors);
 *   real units also have genuine differential trends, so this share is not all false alarm: the
 *   row gives the correlation across null adopters between the gap's pre-period slope and the
 *   null adopter's difference in differences (a drift the estimate counts as effect).
 * - testing/anticipation: "weakens" (the event study's joint lead test by placebo units, 5%).
 * - instrumentation: "weakens" (a 1% test of a level break in the pool mean, Newey-West); the
 *   pool mean barely changes from one fake adopter to the next, so it is also swept over every
 *   start date of the panel with the mean of all units.
 * - regression to the mean: "weakens" (a spike beyond the 5% t bound of its own history and
 *   above the 95th percentile of the candidates' at the same date); the candidates' ranking alone
 *   gives a fake adopter drawn from the panel that rank as often as the positions allow.
 * - selection: "weakens" (level or trend beyond the 5th/95th percentile of the candidates); a
 *   fake adopter drawn from the panel is such an outlier by construction about as often as the
 *   rank positions allow, printed beside it: this rule describes the unit, it is not a test of
 *   the effect.
 * - diffusion: "weakens" (the neighbours' effect outside the range of the distant donors'
 *   placebo effects; 2 / (n + 1) for one exchangeable neighbour and n placebos).
 * - placebo in time (did, default minDistance 3): share of fake adopters whose placebo-date
 *   share is <= 0.05; exchangeable: (floor(n/20) + 1) / (n + 1) with n fake dates.
 * Leave one out and alternative pools give ranges and a sign warning, not a verdict, so they
 * have no false-alarm rate to measure here.
 */
import { readFileSync } from 'node:fs'
import path from 'node:path'
import { fileURLToPath } from 'node:url'
import { estimate } from '../server/engine/index'
import { placeboInTime } from '../server/engine/robustness/placeboTime'
import { threatEvidence } from '../server/engine/threats'
import { did2x2, lineOf, meanSeries } from '../server/engine/threats/basics'
import { comparisonBreak } from '../server/engine/threats/instrumentation'
import type { TypedRow } from '../server/engine/panel'
import type { ThreatEvidence, Verdict } from '../shared/engine/threats'
import type { BenchFigure } from './index'

const here = path.dirname(fileURLToPath(import.meta.url))

export interface RealPanel {
  name: string
  rows: TypedRow[]
  units: string[]
  periods: number[]
  /** unit -> period-aligned outcome series */
  series: Map<string, Float64Array>
  /** unit -> group of neighbours (same region), when the panel has one */
  region: Map<string, string> | null
}

/** A reference panel CSV (unit, period, outcome[, region]) as typed rows and aligned series. */
export function readPanel(name: string, folder: string, regionColumn?: string): RealPanel {
  const text = readFileSync(path.join(here, '../tests/fixtures/reference', folder, 'panel.csv'), 'utf8').trim().split(/\r?\n/)
  const header = text[0]!.split(',')
  const col = (c: string) => header.indexOf(c)
  const rows: TypedRow[] = []
  const region = regionColumn ? new Map<string, string>() : null
  for (const line of text.slice(1)) {
    const f = line.split(',')
    const unit = f[col('unit')]!
    rows.push({ unit, period: Number(f[col('period')]), values: { outcome: Number(f[col('outcome')]) } })
    if (region) region.set(unit, f[col(regionColumn!)]!)
  }
  const units = [...new Set(rows.map(r => r.unit))].sort()
  const periods = [...new Set(rows.map(r => Number(r.period)))].sort((a, b) => a - b)
  const at = new Map(periods.map((p, i) => [p, i]))
  const series = new Map(units.map(u => [u, new Float64Array(periods.length).fill(NaN)]))
  for (const r of rows) series.get(r.unit)![at.get(Number(r.period))!] = r.values.outcome as number
  return { name, rows, units, periods, series, region }
}

/** The threat evidence for unit u as a fake adopter at `start` against every other unit. */
export function nullAdopterEvidence(p: RealPanel, u: string, start: number, leads: Parameters<typeof threatEvidence>[0]['leads']): ThreatEvidence[] {
  const T = p.periods.length
  const nPre = p.periods.indexOf(start)
  const others = p.units.filter(x => x !== u)
  const seriesOf = (x: string) => ({ unit: x, values: p.series.get(x)! })
  const neighbours = p.region ? others.filter(x => p.region!.get(x) === p.region!.get(u)) : []
  const near = new Set(neighbours)
  return threatEvidence({
    series: { periods: p.periods.map(String), nPre, treated: p.series.get(u)!, pool: meanSeries(others.map(x => p.series.get(x)!), T) },
    treatedUnits: [u],
    leads,
    revisions: [],
    candidates: others.map(seriesOf),
    neighbours: neighbours.map(seriesOf),
    distant: others.filter(x => !near.has(x)).map(seriesOf),
  })
}

/** Chance that a unit drawn from n + 1 exchangeable ones ranks above the 95th percentile of the other n. */
function upperRate(n: number): number {
  let hits = 0
  for (let below = 0; below <= n; below++) if (below / n > 0.95) hits++
  return hits / (n + 1)
}

/** Chance that a unit drawn from n + 1 exchangeable ones ranks beyond the 5th/95th percentile of the other n. */
function outlierRate(n: number): number {
  let hits = 0
  for (let below = 0; below <= n; below++) {
    const r = below / n
    if (r < 0.05 || r > 0.95) hits++
  }
  return hits / (n + 1)
}

function correlation(a: number[], b: number[]): number {
  const ma = a.reduce((s, v) => s + v, 0) / a.length
  const mb = b.reduce((s, v) => s + v, 0) / b.length
  let sab = 0
  let saa = 0
  let sbb = 0
  for (let i = 0; i < a.length; i++) {
    sab += (a[i]! - ma) * (b[i]! - mb)
    saa += (a[i]! - ma) ** 2
    sbb += (b[i]! - mb) ** 2
  }
  return sab / Math.sqrt(saa * sbb)
}

const share = (k: number, n: number) => `${k}/${n} (${Math.round((100 * k) / n)}%)`
const pc = (x: number) => `${Math.round(100 * x)}%`

interface Line { panel: string, rule: string, error: string, verdicts: string, builtAs: string }

async function panelLines(p: RealPanel, start: number): Promise<Line[]> {
  const n = p.units.length
  const label = `${p.name} ${start}`
  const nPre = p.periods.indexOf(start)
  const counts = new Map<string, Record<Verdict, number>>()
  const fakeDates: number[] = []
  let ptimeUnusual = 0
  let ptimeN = 0
  let ptimeFakes = 0
  const slopes: number[] = []
  const nullEffects: number[] = []
  for (const u of p.units) {
    const others = p.units.filter(x => x !== u)
    const pool = meanSeries(others.map(x => p.series.get(x)!), p.periods.length)
    const gap = Array.from(p.series.get(u)!, (y, t) => y - pool[t]!)
    const line = lineOf(gap, 0, nPre)
    if (line) {
      slopes.push(line.slope)
      nullEffects.push(did2x2(p.series.get(u)!, pool, 0, nPre, p.periods.length))
    }
    const es = estimate({ rows: p.rows }, { design: 'event_study', treated: [u], start, comparison: others })
    const leads = { points: es.eventStudy ?? null, placeboP: es.preTrend?.leadPermutation?.p ?? null, waldP: es.preTrend?.wald?.p ?? null, waldReliable: es.inference?.method === 'analytic' && (es.nClusters ?? 0) >= 30 }
    for (const e of nullAdopterEvidence(p, u, start, leads)) {
      const c = counts.get(e.threat) ?? { supports: 0, weakens: 0, unclear: 0 }
      c[e.verdict]++
      counts.set(e.threat, c)
      if (e.threat === 'history') fakeDates.push(e.figures.fakeDates ?? 0)
    }
    try {
      const pt = await placeboInTime(p.rows, { design: 'did', treated: [u], start, comparison: others })
      if (pt.share !== null) {
        ptimeN++
        ptimeFakes = pt.n
        if (pt.share <= 0.05) ptimeUnusual++
      }
    }
    catch {
      // a pre-period too short for one fake start: the check refuses, counted as not run
    }
  }
  const v = (t: string) => counts.get(t)!
  const words = (t: string) => `supports ${v(t).supports}, weakens ${v(t).weakens}, cannot tell ${v(t).unclear}`
  const nf = fakeDates[0] ?? 0
  const lines: Line[] = [
    { panel: label, rule: 'history (fake start dates)', error: `supports ${share(v('history').supports, n)}`, verdicts: words('history'), builtAs: nf >= 5 ? `placebo p <= 0.10, ${nf} dates: ${pc(Math.floor((nf + 1) / 10 + 1e-9) / (nf + 1))} supports, ~75% weakens` : `${nf} fake dates: cannot tell` },
    { panel: label, rule: 'maturation (gap slope)', error: `weakens ${share(v('maturation').weakens, n)}`, verdicts: `${words('maturation')}; corr(pre slope, null effect) ${slopes.length > 2 ? correlation(slopes, nullEffects).toFixed(2) : 'n/a'}`, builtAs: nPre >= 6 ? '5% t test, independent errors' : 'under 6 pre-periods: cannot tell' },
    { panel: label, rule: 'testing/anticipation (leads)', error: `weakens ${share(v('testing').weakens, n)}`, verdicts: words('testing'), builtAs: '5% joint lead test by placebo units' },
    { panel: label, rule: 'instrumentation (pool break)', error: `weakens ${share(v('instrumentation').weakens, n)}`, verdicts: words('instrumentation'), builtAs: '1% Newey-West test; one pool mean for all' },
    { panel: label, rule: 'regression to the mean (spike)', error: `weakens ${share(v('regression_to_mean').weakens, n)}`, verdicts: words('regression_to_mean'), builtAs: nPre - 2 >= 6 ? `5% t bound and top 5% of ${n - 1}: at most ${pc(upperRate(n - 1))}` : 'under 6 earlier periods: cannot tell' },
    { panel: label, rule: 'selection (5th/95th percentile)', error: `weakens ${share(v('selection').weakens, n)}`, verdicts: words('selection'), builtAs: `2 ranks, each ${pc(outlierRate(n - 1))} by construction` },
  ]
  if (p.region) lines.push({ panel: label, rule: 'diffusion (region neighbours)', error: `weakens ${share(v('diffusion').weakens, n)}`, verdicts: words('diffusion'), builtAs: 'outside placebo range; one neighbour 2/(n+1)' })
  lines.push({
    panel: label,
    rule: 'placebo in time, did (share <= 0.05)',
    error: ptimeN ? `unusual ${share(ptimeUnusual, ptimeN)}` : 'not run',
    verdicts: ptimeN ? `${ptimeFakes} fake dates each` : 'pre-period too short',
    builtAs: ptimeN ? `exchangeable: ${pc((Math.floor(ptimeFakes / 20) + 1) / (ptimeFakes + 1))}` : '-',
  })
  return lines
}

/** Instrumentation swept over start dates: the all-unit mean's level break at every date with 3 periods on each side. */
function breakSweep(p: RealPanel): Line {
  const T = p.periods.length
  const all = meanSeries(p.units.map(u => p.series.get(u)!), T)
  let hits = 0
  let n = 0
  for (let d = 3; d <= T - 3; d++) {
    const b = comparisonBreak({ periods: p.periods.map(String), nPre: d, treated: all, pool: all })
    if (!b) continue
    n++
    if (b.p < 0.01) hits++
  }
  return { panel: p.name, rule: 'instrumentation, every start date', error: `p < 0.01 ${share(hits, n)}`, verdicts: `${n} dates`, builtAs: '1% Newey-West test' }
}

export function printTable(lines: Line[]): void {
  const w = { panel: 16, rule: 37, error: 22, builtAs: 50 }
  console.log('\nThreat evidence and placebo in time on null adopters (true effect 0):')
  console.log(`${'panel'.padEnd(w.panel)} ${'rule'.padEnd(w.rule)} ${'error under no effect'.padEnd(w.error)} ${'built as'.padEnd(w.builtAs)} verdicts`)
  for (const l of lines) console.log(`${l.panel.padEnd(w.panel)} ${l.rule.padEnd(w.rule)} ${l.error.padEnd(w.error)} ${l.builtAs.padEnd(w.builtAs)} ${l.verdicts}`)
  console.log('')
}

export async function run(): Promise<BenchFigure[]> {
  const panels: [RealPanel, number][] = [
    [readPanel('Produc', 'c2_produc_wild_cluster_bootstrap', 'region'), 1980],
    [readPanel('Produc', 'c2_produc_wild_cluster_bootstrap', 'region'), 1984],
    [readPanel('Gasoline', 'c3_gasoline_placebo_space'), 1973],
    [readPanel('Gasoline', 'c3_gasoline_placebo_space'), 1975],
    [readPanel('Fatalities', 'a1_fatalities_twfe_beertax'), 1985],
  ]
  const figures: BenchFigure[] = []
  const lines: Line[] = []
  const swept = new Set<string>()
  for (const [p, start] of panels) {
    const t0 = performance.now()
    lines.push(...(await panelLines(p, start)))
    if (!swept.has(p.name)) lines.push(breakSweep(p))
    swept.add(p.name)
    figures.push({ name: `threat evidence calibration, ${p.name} (${p.units.length} null adopters, start ${start})`, medianMs: performance.now() - t0, target: null })
  }
  printTable(lines)
  return figures
}
