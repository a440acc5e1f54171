/**
 * Which inference stands behind the headline (spec.inference.method "auto", the default), and
 * why, in one sentence the result carries as inference.reason.
 *
 * The rule (DESIGN.md, "Inference"). Cluster-robust errors need many treated and many
 * untreated clusters; with few treated units they are far too narrow (Conley and Taber 2011;
 * MacKinnon and Webb 2017). Thresholds are common practice, not theorems:
 * - weighted comparison: placebo units with re-fitted weights (the only inference it has);
 * - one series with no comparison (its without a comparison, pre/post): analytic, since no
 *   unit can serve as a placebo; the result says so;
 * - a comparison series (its with comparison "mean" or "synthetic"): placebo units, because
 *   the gap inherits common shocks that Newey-West understates;
 * - difference-in-differences or event study with fewer than 10 treated units: placebo units
 *   (sets of as many comparison units as there are treated ones);
 * - 10 or more treated clusters: the analytic CR1 interval when there are also at least 50
 *   clusters with 10 or more untreated; otherwise the wild cluster bootstrap (did) or placebo
 *   sets (event study);
 * - a treatment column (dose or switch by row): wild cluster bootstrap below 50 clusters,
 *   analytic from 50.
 * Where no method can be trusted (one treated unit and fewer than 19 comparison units) the
 * caller adds a warning.
 */
import type { InferenceResult } from '../../../shared/engine/result'
import type { Spec } from '../../../shared/engine/spec'
import { EngineError } from '../errors'

export type Method = InferenceResult['method']

export interface Situation {
  design: Spec['design']
  /** its: which comparison series, if any. */
  itsComparison: 'none' | 'mean' | 'synthetic'
  nTreated: number
  nComparison: number
  nClusters: number | null
  nTreatedClusters: number | null
  byColumn: boolean
}

export interface Choice {
  method: Method
  reason: string
}

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`

function canPermute(s: Situation): string | null {
  if (s.design === 'pre_post' || (s.design === 'its' && s.itsComparison === 'none')) return 'a single series has no comparison units to serve as placebos'
  if (s.byColumn) return 'with a treatment column there is no set of treated units to re-assign'
  if (s.nComparison < s.nTreated + 1) return `placebo sets of ${s.nTreated} need at least ${s.nTreated + 1} comparison units, one left as the pool (there ${s.nComparison === 1 ? 'is' : 'are'} ${s.nComparison})`
  return null
}

function canBootstrap(s: Situation): string | null {
  if (s.design !== 'did') return `the wild cluster bootstrap is available for difference-in-differences only (design "${s.design}")`
  if (s.nClusters === null) return 'the wild cluster bootstrap needs clustered errors (cluster "unit" or a clusterColumn)'
  if (s.nClusters < 2) return 'the wild cluster bootstrap needs at least two clusters'
  return null
}

/** The method the spec asks for, checked, or the one "auto" picks, with the reason. */
export function chooseInference(spec: Spec, s: Situation): Choice {
  const asked = spec.inference.method
  if (s.design === 'synthetic') {
    if (asked === 'analytic' || asked === 'wild_bootstrap') {
      throw new EngineError('invalid_spec', `inference.method "${asked}": the weighted comparison has no analytic or bootstrap errors; use "permutation" (placebo units) or "auto"`)
    }
    return { method: 'permutation', reason: 'weighted comparison: every donor in turn gets its own weighted comparison from the other donors, and p is the rank of the post/pre fit ratio' }
  }
  if (asked === 'permutation') {
    const why = canPermute(s)
    if (why) throw new EngineError('invalid_spec', `inference.method "permutation" cannot run: ${why}; use "analytic"${canBootstrap(s) ? '' : ' or "wild_bootstrap"'}`)
    return { method: 'permutation', reason: 'placebo units, as the spec asks' }
  }
  if (asked === 'wild_bootstrap') {
    const why = canBootstrap(s)
    if (why) throw new EngineError('invalid_spec', `inference.method "wild_bootstrap" cannot run: ${why}; use ${canPermute(s) ? '"analytic"' : '"permutation" or "analytic"'}`)
    return { method: 'wild_bootstrap', reason: 'wild cluster bootstrap, as the spec asks' }
  }
  if (asked === 'analytic') return { method: 'analytic', reason: 'analytic errors, as the spec asks' }

  // auto
  if (s.design === 'pre_post') return { method: 'analytic', reason: 'before-and-after of the treated units alone: no comparison units can serve as placebos, so the interval is the analytic one and rests on the model being right' }
  if (s.design === 'its' && s.itsComparison === 'none') {
    return { method: 'analytic', reason: 'a single series: no comparison units can serve as placebos, so the interval is the analytic one of the model (Newey-West, AR(1) or count-model errors, as its.errors and its.family set) and rests on the segmented model being right' }
  }
  if (s.design === 'its') {
    if (canPermute(s)) return { method: 'analytic', reason: `no comparison unit can serve as a placebo (${canPermute(s)}), so the interval is the analytic one of the model (Newey-West or AR(1) errors, as its.errors sets)` }
    return { method: 'permutation', reason: `a comparison series shares shocks with the treated one that Newey-West errors understate, so each of the ${plural(s.nComparison, 'comparison unit')} in turn is run through the same model against the others` }
  }
  if (s.byColumn) {
    if (s.nClusters !== null && s.nClusters >= 50) return { method: 'analytic', reason: `a treatment column with ${s.nClusters} clusters: cluster-robust errors are dependable at this size` }
    if (!canBootstrap(s)) return { method: 'wild_bootstrap', reason: `a treatment column with only ${plural(s.nClusters ?? 0, 'cluster')}: cluster-robust errors are too narrow, the wild cluster bootstrap holds its level better` }
    return { method: 'analytic', reason: 'a treatment column: the analytic cluster-robust interval (no resampling method applies here)' }
  }
  const treatedClusters = s.nTreatedClusters ?? s.nTreated
  if (s.nTreated < 10 || treatedClusters < 10) {
    if (!canPermute(s)) {
      return {
        method: 'permutation',
        reason: `${plural(s.nTreated, 'treated unit')}: model-based (cluster-robust) intervals are far too narrow with so few, so each ${s.nTreated === 1 ? 'comparison unit' : `set of ${s.nTreated} comparison units`} in turn plays the treated ${s.nTreated === 1 ? 'unit' : 'units'} with the others as its pool`,
      }
    }
    if (!canBootstrap(s)) return { method: 'wild_bootstrap', reason: `${plural(treatedClusters, 'treated cluster')} and too few comparison units for placebos: the wild cluster bootstrap` }
    return { method: 'analytic', reason: 'no resampling method applies: the analytic interval, which is too narrow with few treated units' }
  }
  const untreated = (s.nClusters ?? 0) - treatedClusters
  if (s.nClusters !== null && s.nClusters >= 50 && untreated >= 10) {
    return { method: 'analytic', reason: `${treatedClusters} treated and ${untreated} untreated clusters: cluster-robust errors are dependable at this size` }
  }
  if (!canBootstrap(s)) return { method: 'wild_bootstrap', reason: `${treatedClusters} treated of ${s.nClusters} clusters: too few clusters for cluster-robust errors, so the wild cluster bootstrap` }
  if (!canPermute(s)) return { method: 'permutation', reason: `${treatedClusters} treated of ${s.nClusters ?? 0} clusters: too few for cluster-robust errors, so placebo sets of ${s.nTreated} comparison units` }
  return { method: 'analytic', reason: 'no resampling method applies: the analytic interval' }
}
