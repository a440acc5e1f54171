/**
 * Pre/post comparison of the treated units alone: y_it = a_i + beta post_it (+ x'c) + e_it,
 * with unit effects when there are several treated units (one unit: an intercept). beta is
 * the change in the mean outcome from before to after the start. With no comparison group
 * any change over time is attributed to the policy, so the result always carries a warning
 * that this is weak evidence. Errors: clustered by unit with several units, HC1 (MacKinnon
 * and White 1985) for one unit, classical with cluster "none".
 *
 * Throws EngineError 'invalid_spec' (no treated units or start), 'no_pre_periods',
 * 'no_post_periods', and what the regression throws.
 */
import type { EstimateResult } from '../../../shared/engine/result'
import type { Spec } from '../../../shared/engine/spec'
import type { Panel } from '../panel'
import { type CovarianceRequest, coefficientOf, fitLinearModel } from '../regression'
import { makeResult } from '../report'
import { clusterWarnings, covarianceFor, requirePrePost, resolveRoles, selectSample, treatmentIndicator } from '../sample'

export const PRE_POST_WARNING =
  'pre/post is weak evidence: with no comparison group, trends, other events and regression to the mean are all counted as the effect of the policy; prefer its or did where data allow'

export function estimatePrePost(panel: Panel, spec: Spec): EstimateResult {
  const warnings: string[] = [PRE_POST_WARNING]
  const roles = resolveRoles(panel, { ...spec, comparison: [] }, { requireTreated: true, requireStart: true })
  const sample = selectSample(panel, spec, roles, { columns: spec.covariates }, warnings)
  requirePrePost(sample, roles, spec)
  const post = treatmentIndicator(sample, roles)
  const several = sample.nUnits > 1
  let covariance: CovarianceRequest
  if (spec.cluster === 'none') covariance = { kind: 'iid' }
  else if (several) covariance = covarianceFor(spec, sample)
  else {
    covariance = { kind: 'hc1' }
    warnings.push('one unit: errors are heteroskedasticity-robust (HC1) but ignore autocorrelation; its with Newey-West errors accounts for it')
  }
  const fit = fitLinearModel({
    y: sample.y,
    terms: [{ name: 'treatment', values: post }, ...spec.covariates.map((c) => ({ name: c, values: sample.column(c) }))],
    intercept: true,
    absorb: several ? { unit: sample.unit, nUnits: sample.nUnits } : undefined,
    covariance,
  })
  if (several && covariance.kind === 'cluster') warnings.push(...clusterWarnings(spec, sample.nUnits, sample.nUnits))
  return makeResult(spec, sample, fit, covariance, { term: 'treatment', ...coefficientOf(fit, 'treatment') }, {}, warnings)
}
