/**
 * Dispatch by spec.design: validates the spec, builds the panel with the columns the spec
 * names, and calls the design module. Designs still to come ("staggered" group-time
 * effects, "synthetic" weights) are refused with EngineError 'not_available'; they slot in
 * here as further modules under designs/.
 *
 * Throws EngineError 'invalid_spec' (zod issues listed in `issues`) and whatever the design
 * throws.
 */
import type { EstimateResult } from '../../shared/engine/result'
import { type Spec, type SpecInput, describeSpecIssues, specSchema } from '../../shared/engine/spec'
import { estimateDid } from './designs/did'
import { estimateEventStudy } from './designs/eventStudy'
import { estimateIts } from './designs/its'
import { estimatePrePost } from './designs/prePost'
import { EngineError } from './errors'
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
  return [...new Set(cols)]
}

export function panelFor(input: PanelInput, spec: Spec): Panel {
  return buildPanel(input, { unit: spec.unit, period: spec.period, numeric: specColumns(spec) })
}

export function estimate(input: PanelInput, specInput: SpecInput | Spec | unknown): EstimateResult {
  const spec = parseSpec(specInput)
  if (spec.design === 'staggered' || spec.design === 'synthetic') {
    const what = spec.design === 'staggered' ? 'staggered adoption (group-time effects)' : 'synthetic control weights'
    throw new EngineError('not_available', `design "${spec.design}" (${what}) is not available yet; use "did", "event_study", "its" or "pre_post"`)
  }
  const panel = panelFor(input, spec)
  switch (spec.design) {
    case 'did':
      return estimateDid(panel, spec)
    case 'event_study':
      return estimateEventStudy(panel, spec)
    case 'its':
      return estimateIts(panel, spec)
    case 'pre_post':
      return estimatePrePost(panel, spec)
  }
}
