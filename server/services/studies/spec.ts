/**
 * From a study to the engine's spec: the study fixes the outcome column, transform, treated
 * units and their starts, the window and the covariates; a run adds its design, the pool
 * as comparison, and options. Defaults a practitioner would choose where the run says
 * nothing: an event window of a year either side for monthly data (8 quarters, 5 years,
 * else 6 periods) clipped to the data and, on the lead side, to fewer leads than clusters
 * (so the joint lead test can be computed); for its the treated unit's interventions as breaks
 * and seasonal dummies for monthly or quarterly data. Pure.
 */
import type { SpecInput } from '#shared/engine/spec'
import type { Study } from '~~/db/schema'
import type { RunDesign } from '#shared/schemas/studies'
import { parsePeriod } from '#shared/utils/periods'
import type { z } from 'zod'
import type { runOptionsSchema } from '#shared/schemas/studies'

/** The fields of a study the spec is built from. */
export type StudyForSpec = Pick<Study, 'treated' | 'start' | 'interventions' | 'window' | 'covariates' | 'transform'>

export type RunOptions = z.output<typeof runOptionsSchema>

/** Each treated unit's first treated period (a year stored as "2007" may come back from jsonb as the number 2007). */
export function startsOf(study: Pick<StudyForSpec, 'treated' | 'start'>): Record<string, string> {
  const out: Record<string, string> = {}
  // a stored "2007" can come back from jsonb as the number 2007
  const start = study.start as unknown
  for (const code of study.treated) out[code] = typeof start === 'string' || typeof start === 'number' ? String(start) : String((start as Record<string, string | number>)[code])
  return out
}

export function studySpecBase(study: StudyForSpec) {
  return {
    outcome: 'outcome',
    treated: study.treated,
    start: study.start,
    covariates: study.covariates,
    transform: study.transform === 'log' ? 'log' as const : 'level' as const,
    ...(study.window ? { window: study.window } : {}),
  }
}

const SPAN: Record<string, number> = { month: 12, quarter: 8, year: 5 }

/** periods: the sorted canonical periods of the rows the run will read. */
/** Whether a run of this design and options reads the pool (comparison units). */
export function runUsesPool(design: RunDesign, options: RunOptions): boolean {
  return design === 'did' || design === 'event_study' || design === 'synthetic' || design === 'staggered' || (design === 'its' && !!options.its?.comparison && options.its.comparison !== 'none')
}

/** An its run that models counts (Poisson or quasi-Poisson) with the denominator as exposure. */
export function isCountModel(design: RunDesign, options: RunOptions): boolean {
  return design === 'its' && !!options.its?.family && options.its.family !== 'gaussian'
}

/** Later interventions on the treated jurisdictions (after their start), sorted, without repeats. */
export function laterInterventions(study: Pick<StudyForSpec, 'treated' | 'start' | 'interventions'>): { period: string, label: string }[] {
  const starts = startsOf(study)
  const seen = new Map<string, string>()
  for (const i of study.interventions) {
    const s = starts[i.jurisdiction]
    if (s !== undefined && i.period > s && !seen.has(i.period)) seen.set(i.period, i.label)
  }
  return [...seen.entries()].sort(([a], [b]) => (a < b ? -1 : 1)).map(([period, label]) => ({ period, label }))
}

export function buildRunSpec(study: StudyForSpec, design: RunDesign, options: RunOptions, comparison: string[], periods: string[]): SpecInput {
  const spec: SpecInput = { design, ...studySpecBase(study) }
  if (runUsesPool(design, options)) spec.comparison = comparison
  if (design === 'staggered') {
    // group-time effects use every period against each cohort's own base period, without covariates
    delete spec.window
    spec.covariates = []
  }
  const inData = (p: string) => periods.length > 0 && p > periods[0]! && p <= periods[periods.length - 1]!
  if (design === 'did' && options.interventions === 'each' && !options.did?.phases) {
    const phases = laterInterventions(study).map(i => i.period).filter(inData)
    if (phases.length) spec.did = { form: options.did?.form ?? 'twfe', phases }
  }
  if (design === 'event_study' && !options.eventWindow && periods.length) {
    const freq = parsePeriod(periods[0]!).frequency
    const span = SPAN[freq] ?? 6
    const first = parsePeriod(periods[0]!).ordinal
    const last = parsePeriod(periods[periods.length - 1]!).ordinal
    const starts = Object.values(startsOf(study)).map(p => parsePeriod(p).ordinal)
    const lead = Math.max(...starts.map(s => s - first))
    const lag = Math.max(...starts.map(s => last - s))
    // the joint lead test needs fewer leads than clusters: keep from..-2 under G - 1 leads
    const clusters = study.treated.length + comparison.length
    const leads = Math.max(2, Math.min(span, lead, clusters - 1))
    spec.eventWindow = { from: -leads, to: Math.max(0, Math.min(span, lag)), reference: -1, bin: true }
  }
  if (design === 'its') {
    const unit = study.treated[0]!
    const freq = periods.length ? parsePeriod(periods[0]!).frequency : 'integer'
    const fromEvents = options.interventions === 'first' ? [] : study.interventions.filter(i => i.jurisdiction === unit).map(i => i.period)
    const breaks = [...new Set([startsOf(study)[unit]!, ...fromEvents])].filter(inData).sort()
    spec.its = {
      seasonality: freq === 'month' ? 'month' : freq === 'quarter' ? 'quarter' : 'none',
      ...(breaks.length ? { breaks } : {}),
      ...options.its,
    }
    if (isCountModel(design, options)) {
      // the count as recorded, with the denominator as exposure: rates per 1,000 follow from the rate ratios
      spec.outcome = 'count'
      spec.transform = 'level'
      spec.its.exposure = 'exposure'
      spec.covariates = []
    }
  }
  const { its: _its, eventWindow, interventions: _interventions, did, ...rest } = options
  if (eventWindow) spec.eventWindow = eventWindow
  if (did) spec.did = { ...spec.did, ...did }
  Object.assign(spec, rest)
  return spec
}
