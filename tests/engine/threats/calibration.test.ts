// How often the history (fake start dates) and regression-to-the-mean rules flag null adopters of
// real panels: every unit in turn a fake single adopter with all the others as pool and candidates
// (true effect 0 by construction), the fast version of bench/evidence.bench.ts (which prints every
// rule). Panels from tests/fixtures/reference (sources in its README): Produc (plm dataset, Munnell
// 1990: 48 US states x 1970-1986, log gross state product) and Gasoline (plm dataset, Baltagi and
// Griffin 1983: 18 OECD countries x 1960-1978, log gasoline use per car).
//
// The error under no effect: for history a "supports" (a null effect called rare among fake start
// dates; "weakens" is the right reading of a null effect), for regression to the mean a "weakens".
// Bound: the largest count a calibrated rule exceeds with probability under 1%, from the binomial
// distribution at the rule's nominal rate (10% for history's placebo p <= 0.10, 5% for the spike
// rule) over the panel's units, computed below. Fake adopters share one start date, so they are
// not independent trials: the bound guards against gross miscalibration, not a 1-point drift.
import { readFileSync } from 'node:fs'
import path from 'node:path'
import { describe, expect, it } from 'vitest'
import { meanSeries } from '../../../server/engine/threats/basics'
import { historyEvidence } from '../../../server/engine/threats/history'
import { regressionToMeanEvidence } from '../../../server/engine/threats/regressionToMean'

const reference = path.join(__dirname, '../../fixtures/reference')

function panel(folder: string) {
  const lines = readFileSync(path.join(reference, folder, 'panel.csv'), 'utf8').trim().split(/\r?\n/)
  const header = lines[0]!.split(',')
  const [iu, ip, iy] = ['unit', 'period', 'outcome'].map(c => header.indexOf(c))
  const recs = lines.slice(1).map(l => l.split(','))
  const units = [...new Set(recs.map(r => r[iu!]!))].sort()
  const periods = [...new Set(recs.map(r => Number(r[ip!])))].sort((a, b) => a - b)
  const series = new Map(units.map(u => [u, new Float64Array(periods.length).fill(NaN)]))
  for (const r of recs) series.get(r[iu!]!)![periods.indexOf(Number(r[ip!]))] = Number(r[iy!])
  return { units, periods, series }
}

/** Verdict counts of history and regression to the mean over every unit as a null adopter at `start`. */
function nullAdopters(folder: string, start: number) {
  const p = panel(folder)
  const T = p.periods.length
  const nPre = p.periods.indexOf(start)
  const out = { n: p.units.length, historySupports: 0, historyFakeDates: 0, spikeWeakens: 0, spikeOwnOnly: 0 }
  for (const u of p.units) {
    const others = p.units.filter(x => x !== u)
    const s = { periods: p.periods.map(String), nPre, treated: p.series.get(u)!, pool: meanSeries(others.map(x => p.series.get(x)!), T) }
    const h = historyEvidence(s)
    if (h.verdict === 'supports') out.historySupports++
    out.historyFakeDates = h.figures.fakeDates ?? 0
    const candidates = others.map(x => ({ unit: x, values: p.series.get(x)! }))
    if (regressionToMeanEvidence(s, 2, candidates).verdict === 'weakens') out.spikeWeakens++
    if (regressionToMeanEvidence(s, 2).verdict === 'weakens') out.spikeOwnOnly++
  }
  return out
}

/** Smallest k with P(X > k) < 1% for X ~ Binomial(n, p). */
function binomialBound(n: number, p: number): number {
  let cdf = 0
  let pmf = (1 - p) ** n
  for (let k = 0; k <= n; k++) {
    cdf += pmf
    if (1 - cdf < 0.01) return k
    pmf *= ((n - k) / (k + 1)) * (p / (1 - p))
  }
  return n
}

describe('threat evidence on null adopters of real panels', () => {
  it('the binomial bounds used below (the tails summed independently: n 48, p 0.05: P(X > 6) = 0.0095; n 18, p 0.10: P(X > 5) = 0.0064; n 18, p 0.05: P(X > 4) = 0.0015)', () => {
    expect(binomialBound(48, 0.05)).toBe(6)
    expect(binomialBound(18, 0.1)).toBe(5)
    expect(binomialBound(18, 0.05)).toBe(4)
  })

  it('Produc, fake start 1980: regression to the mean flags at most 6 of 48 (measured 3); history cannot say "supports" with 5 fake dates', () => {
    const r = nullAdopters('c2_produc_wild_cluster_bootstrap', 1980)
    expect(r.n).toBe(48)
    expect(r.spikeWeakens).toBeLessThanOrEqual(binomialBound(48, 0.05))
    // the candidates' ranking lets at most the 3 largest spikes of 48 through, by construction
    expect(r.spikeWeakens).toBeLessThanOrEqual(3)
    // the unit's own history alone flags more (8 of 48 measured): the shared movements the ranking removes
    expect(r.spikeOwnOnly).toBeGreaterThan(r.spikeWeakens)
    // 5 fake dates (3 periods each side in 1970-1979): the smallest placebo p is 1/6 > 0.10, so never "supports"
    // (the earlier rule, unequal windows and share <= 10%, said "supports" for 29 of 48 here)
    expect(r.historyFakeDates).toBe(5)
    expect(r.historySupports).toBe(0)
  })

  it('Gasoline, fake start 1975: history says "supports" for at most 5 of 18 (measured 3, 10 fake dates), the spike rule flags at most 4 (measured 1)', () => {
    const r = nullAdopters('c3_gasoline_placebo_space', 1975)
    expect(r.n).toBe(18)
    expect(r.historyFakeDates).toBe(10)
    expect(r.historySupports).toBeLessThanOrEqual(binomialBound(18, 0.1))
    expect(r.spikeWeakens).toBeLessThanOrEqual(binomialBound(18, 0.05))
  })
})
