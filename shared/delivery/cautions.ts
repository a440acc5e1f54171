/**
 * The cautions printed wherever results are read (workbook, printable report, screens):
 * the standing ones from DESIGN.md "Quality bars", then those a given result calls for.
 * Pure; shared by the server and the browser.
 */
import type { EstimateResult } from '../engine/result'
import { ESTIMATE_CAUTIONS } from '../schemas/studies'
import { warningText } from './warnings'

/** The cautions that stand beside every estimate (one list, kept with the study schemas). */
export const STANDING_CAUTIONS = ESTIMATE_CAUTIONS

/** Below this many clusters, cluster-robust errors are known to be fragile. */
export const FEW_CLUSTERS = 30

type CautionInput = Pick<EstimateResult, 'design' | 'nClusters' | 'preTrend' | 'warnings'> & Partial<Pick<EstimateResult, 'inference' | 'comparison'>>

export function resultCautions(result: CautionInput, treatedUnits: number): string[] {
  const out: string[] = []
  const analytic = !result.inference || result.inference.method === 'analytic'
  if (result.design === 'pre_post') out.push('Pre/post comparison of the treated units alone: there is no comparison group, so anything else that changed at the same time is counted as the policy\'s effect. Treat it as weak evidence.')
  if (result.design === 'its' && !result.comparison && treatedUnits === 1) {
    // a single series: no clusters and no comparison group, so the clustered-error caution does not apply
    out.push('One jurisdiction\'s series alone: the effect is read from the break in its own trend, so anything else that changed at the same time is counted as the policy\'s effect.')
  }
  else if (treatedUnits > 0 && treatedUnits <= 2) {
    const tail = analytic && result.nClusters != null && result.design !== 'its' ? ', and clustered errors understate the uncertainty' : ''
    out.push(`Only ${treatedUnits} treated unit${treatedUnits === 1 ? '' : 's'}: the effect rests on ${treatedUnits === 1 ? 'one jurisdiction' : 'two jurisdictions'}${tail}.`)
  }
  if (analytic && result.nClusters != null && result.nClusters < FEW_CLUSTERS) out.push(`${result.nClusters} clusters: fewer than ${FEW_CLUSTERS}, so cluster-robust errors may be too small; placebo units or the wild cluster bootstrap are safer.`)
  const wald = result.preTrend?.wald
  const lead = result.preTrend?.leadPermutation
  if (lead) {
    if (lead.p < 0.1) out.push(`The treated unit's pre-period (lead) coefficients are larger than those of most placebo units (p = ${lead.p.toFixed(3)} by placebo units): the trends before the policy may not be parallel.`)
  } else if (wald && Number.isFinite(wald.p) && wald.p < 0.1) {
    const few = result.nClusters != null && result.nClusters < FEW_CLUSTERS
    out.push(few
      ? `The joint lead test gives p = ${wald.p.toFixed(3)}, but with ${result.nClusters} clusters that F test is unreliable and cannot be judged; look at the lead coefficients and the placebo units instead.`
      : `The pre-period (lead) coefficients differ jointly from zero (p = ${wald.p.toFixed(3)}): the trends before the policy may not be parallel.`)
  }
  const slope = result.preTrend?.slopeDiff
  if (slope && Number.isFinite(slope.p) && slope.p < 0.1) out.push(`Treated and comparison units trended differently before the policy (slope difference p = ${slope.p.toFixed(3)}).`)
  for (const w of result.warnings) out.push(warningText(w))
  return out
}

export function allCautions(result: CautionInput, treatedUnits: number): string[] {
  return [...resultCautions(result, treatedUnits), ...STANDING_CAUTIONS]
}
