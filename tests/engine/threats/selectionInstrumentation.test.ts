// Selection and instrumentation evidence (server/engine/threats/selection.ts,
// instrumentation.ts) and the seven-threat assembly (index.ts). Invented inputs whose answers
// are known by construction.
import { describe, expect, it } from 'vitest'
import { anticipationEvidence } from '../../../server/engine/threats/anticipation'
import { threatEvidence } from '../../../server/engine/threats/index'
import { comparisonBreak, revisionSummary } from '../../../server/engine/threats/instrumentation'
import { selectionEvidence, selectionRanks } from '../../../server/engine/threats/selection'

const T = 16
const nPre = 10
// twenty candidates with levels 1..20 and slopes 0.01 j
const candidates = Array.from({ length: 20 }, (_, j) => ({ unit: `C${j + 1}`, values: Array.from({ length: T }, (_, t) => j + 1 + 0.01 * (j + 1) * t) }))

describe('selection', () => {
  it('percentile ranks of level and trend among the candidates', () => {
    // treated level (mean of t = 0..9 of 10.5 + 0.105 t) = 10.5 + 0.105 * 4.5; 10 candidates lie below in both
    const treated = Array.from({ length: T }, (_, t) => 10.5 + 0.105 * t)
    const r = selectionRanks({ nPre, treated, candidates })
    expect(r.levelRank).toBe(0.5)
    expect(r.trendRank).toBe(0.5)
    expect(selectionEvidence({ nPre, treated, candidates }).verdict).toBe('supports')
  })
  it('an outlier in level weakens the estimate', () => {
    const treated = Array.from({ length: T }, (_, t) => 40 + 0.105 * t)
    expect(selectionRanks({ nPre, treated, candidates }).levelRank).toBe(1)
    expect(selectionEvidence({ nPre, treated, candidates }).verdict).toBe('weakens')
  })
  it('cannot tell with fewer than 10 candidates', () => {
    expect(selectionEvidence({ nPre, treated: candidates[0]!.values, candidates: candidates.slice(0, 9) }).verdict).toBe('unclear')
  })
})

describe('instrumentation', () => {
  it('counts revised cells and the largest relative change (by hand)', () => {
    const r = revisionSummary([
      { unit: 'A', period: '2001', values: [100, 100] }, // repeated, unchanged
      { unit: 'A', period: '2002', values: [100, 104, 102] }, // revised: max |v - 100| / 100 = 4%
      { unit: 'B', period: '2002', values: [50, 40] }, // revised: 20%
      { unit: 'B', period: '2003', values: [7] }, // one release only
    ], ['A'])
    expect(r).toMatchObject({ repeated: 3, revised: 2, revisedTreated: 1, maxRelativeTreated: 0.04, largest: { unit: 'B', period: '2002', from: 50, to: 40 } })
    expect(r.maxRelative).toBeCloseTo(0.2, 14)
  })
  it('a level break in the comparison at the start is found; none on a straight line with noise', () => {
    const wiggle = (t: number) => 0.2 * Math.sin(t * 2.1)
    const jump = Array.from({ length: 40 }, (_, t) => 3 + 0.05 * t + wiggle(t) + (t >= 25 ? 4 : 0))
    const b = comparisonBreak({ periods: jump.map((_, i) => String(i)), nPre: 25, treated: jump, pool: jump })!
    expect(b.estimate).toBeGreaterThan(3.5)
    expect(b.p).toBeLessThan(0.01)
  })
})

describe('anticipation', () => {
  const pt = (relTime: number, estimate: number) => ({ relTime, estimate, se: 0.1, ciLow: estimate - 0.2, ciHigh: estimate + 0.2, reference: relTime === -1 })
  it('prefers the placebo p, uses the F test only when reliable', () => {
    const points = [pt(-4, 0.1), pt(-3, -0.1), pt(-2, 0.05), pt(-1, 0), pt(0, -1)]
    expect(anticipationEvidence({ points, placeboP: 0.4, waldP: 0.001, waldReliable: false }).verdict).toBe('supports')
    expect(anticipationEvidence({ points, placeboP: null, waldP: 0.001, waldReliable: false }).verdict).toBe('unclear')
    expect(anticipationEvidence({ points, placeboP: null, waldP: 0.001, waldReliable: true }).verdict).toBe('weakens')
    expect(anticipationEvidence({ points, placeboP: 0.02, waldP: null, waldReliable: false }).figures.leads).toBe(3)
  })
})

describe('threatEvidence', () => {
  it('gives the seven threats in the record\'s order, each with a verdict, figure and rule', () => {
    const pool = Array.from({ length: T }, (_, t) => 5 + 0.1 * t + 0.2 * Math.sin(t))
    const treated = pool.map((v, t) => v + 1 + (t >= nPre ? -0.8 : 0) + 0.05 * Math.cos(3 * t))
    const all = threatEvidence({
      series: { periods: pool.map((_, i) => String(2000 + i)), nPre, treated, pool },
      treatedUnits: ['X'],
      leads: { points: null, placeboP: null, waldP: null, waldReliable: false },
      revisions: [],
      candidates,
      neighbours: [],
      distant: candidates.slice(0, 6),
    })
    expect(all.map(e => e.threat)).toEqual(['history', 'maturation', 'testing', 'instrumentation', 'regression_to_mean', 'selection', 'diffusion'])
    for (const e of all) {
      expect(['supports', 'weakens', 'unclear']).toContain(e.verdict)
      expect(e.figure.length).toBeGreaterThan(10)
      expect(e.rule.length).toBeGreaterThan(10)
    }
  })
})

describe('words', () => {
  it('percentile ordinals', async () => {
    const { percentileText } = await import('../../../server/engine/threats/basics')
    expect([0.01, 0.02, 0.03, 0.11, 0.37, 0.5, 0.92].map(percentileText)).toEqual(['1st percentile', '2nd percentile', '3rd percentile', '11th percentile', '37th percentile', '50th percentile', '92nd percentile'])
  })
})
