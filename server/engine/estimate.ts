/**
 * Dispatch by spec.design: validates the spec, builds the panel with the columns the spec
 * names, and calls the design module. A design still to come is refused with EngineError
 * 'not_available'; designs slot in here as modules under designs/. "synthetic"
 * (designs/synthetic.ts, weighted comparison) sets its own placebo inference, which
 * applyInference leaves as it is.
 *
 * Throws EngineError 'invalid_spec' (zod issues listed in `issues`) and whatever the design
 * throws.
 */
import type { EstimateResult } from '../../shared/engine/result'
import { type Design, type Spec, type SpecInput, describeSpecIssues, specSchema } from '../../shared/engine/spec'
import { estimateDid } from './designs/did'
import { estimateEventStudy } from './designs/eventStudy'
import { estimateIts } from './designs/its'
import { estimatePrePost } from './designs/prePost'
import { estimateStaggered } from './designs/staggered'
import { estimateSynthetic } from './designs/synthetic'
import { EngineError } from './errors'
import { applyInference } from './inference/apply'
import { type Panel, type PanelInput, buildPanel } from './panel'

/** Validates a spec, throwing EngineError 'invalid_spec' with one line per problem. */
export function parseSpec(input: unknown): Spec {
  if (input === null || typeof input !== 'object' || Array.isArray(input)) throw new EngineError('invalid_spec', 'the spec must be a JSON object')
  const parsed = specSchema.safeParse(input)
  if (!parsed.success) {
    const issues = describeSpecIssues(parsed.error)
    throw new EngineError('invalid_spec', `invalid spec: ${issues.join('; ')}`, issues)
  }
  return parsed.data
}

/** Numeric columns a spec reads from the panel. */
export function specColumns(spec: Spec): string[] {
  const cols = [spec.outcome, ...spec.covariates]
  if (spec.treatmentColumn) cols.push(spec.treatmentColumn)
  if (spec.its?.seasonColumn) cols.push(spec.its.seasonColumn)
  if (spec.its?.exposure) cols.push(spec.its.exposure)
  if (spec.clusterColumn) cols.push(spec.clusterColumn)
  if (spec.synthetic) cols.push(...spec.synthetic.covariates)
  return [...new Set(cols)]
}

export function panelFor(input: PanelInput, spec: Spec): Panel {
  return buildPanel(input, { unit: spec.unit, period: spec.period, numeric: specColumns(spec) })
}

type DesignModule = (panel: Panel, spec: Spec) => EstimateResult

/** One entry per design; a design still to come is a string saying what it will be. */
const designModules: Record<Design, DesignModule | string> = {
  did: estimateDid,
  event_study: estimateEventStudy,
  its: estimateIts,
  pre_post: estimatePrePost,
  staggered: estimateStaggered,
  synthetic: estimateSynthetic,
}

export function estimate(input: PanelInput, specInput: SpecInput | Spec | unknown): EstimateResult {
  const spec = parseSpec(specInput)
  const run = designModules[spec.design]
  if (typeof run === 'string') {
    const ready = Object.keys(designModules).filter((d) => typeof designModules[d as Design] !== 'string')
    throw new EngineError('not_available', `design "${spec.design}" (${run}) is not available yet; use ${ready.map((d) => `"${d}"`).join(', ')}`)
  }
  const panel = panelFor(input, spec)
  const result = run(panel, spec)
  // the headline's p-value and interval: placebo units, wild bootstrap or analytic (inference/)
  return applyInference(panel, spec, result, (placeboSpec) => run(panel, placeboSpec))
}
