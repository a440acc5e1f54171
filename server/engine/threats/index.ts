/**
 * Evidence on the seven threats to validity, from typed series (no database): history
 * (placebo start dates), maturation (pre-period trends), testing/anticipation (event-study
 * leads), instrumentation (revisions between releases, a level break in the comparison),
 * regression to the mean (a spike before the start), selection (the treated unit among all
 * candidates) and diffusion (neighbours as if treated). Each module documents its verdict rule.
 *
 *   threatEvidence(input) -> ThreatEvidence[] in the order of the validity record
 */
import type { ThreatEvidence } from '../../../shared/engine/threats'
import { type LeadInput, anticipationEvidence } from './anticipation'
import { diffusionEvidence } from './diffusion'
import { did2x2 } from './basics'
import { historyEvidence } from './history'
import { type RevisedCell, instrumentationEvidence } from './instrumentation'
import { maturationEvidence } from './maturation'
import { regressionToMeanEvidence } from './regressionToMean'
import { selectionEvidence } from './selection'
import { type StudySeries, checkStudySeries } from './studySeries'

export interface ThreatInput {
  series: StudySeries
  treatedUnits: string[]
  leads: LeadInput
  revisions: RevisedCell[]
  /** Every untreated unit with data (selection), on the study's periods. */
  candidates: { unit: string, values: ArrayLike<number> }[]
  /** Neighbours of a treated unit among the pool and candidates. */
  neighbours: { unit: string, values: ArrayLike<number> }[]
  /** The pool without the neighbours. */
  distant: { unit: string, values: ArrayLike<number> }[]
}

export function threatEvidence(x: ThreatInput): ThreatEvidence[] {
  checkStudySeries(x.series, 'threatEvidence')
  const s = x.series
  // the treated unit's effect over the whole pre- and post-period (diffusion compares its sign)
  const actual = did2x2(s.treated, s.pool, 0, s.nPre, s.periods.length)
  return [
    historyEvidence(s),
    maturationEvidence(s),
    anticipationEvidence(x.leads),
    instrumentationEvidence(s, x.revisions, x.treatedUnits),
    regressionToMeanEvidence(s, 2, x.candidates),
    selectionEvidence({ nPre: s.nPre, treated: s.treated, candidates: x.candidates }),
    diffusionEvidence({ periods: s.periods.length, nPre: s.nPre, treatedEffect: actual, neighbours: x.neighbours, distant: x.distant }),
  ]
}

export type { StudySeries } from './studySeries'
export type { RevisedCell } from './instrumentation'
