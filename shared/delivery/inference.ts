/**
 * Plain words for the headline inference and the model terms, shared by the workspace, the
 * printable report and the workbook, so all three say the same thing. Pure.
 */
import type { EstimateResult, InferenceResult } from '../engine/result'

export const METHOD_LABELS: Record<InferenceResult['method'], string> = {
  analytic: 'model-based errors',
  permutation: 'placebo units',
  wild_bootstrap: 'wild cluster bootstrap',
}

const num = (v: number) => (Math.abs(v) >= 1e5 || (v !== 0 && Math.abs(v) < 1e-3) ? v.toExponential(2) : Number(v.toPrecision(3)).toString())

export interface InferenceText {
  method: string
  /** "95% interval -1.62 to -0.92 (placebo units)" or why there is none. */
  interval: string
  /** "p = 0.018 (placebo units; the smallest possible is 0.018)". */
  p: string
  reason: string
  /** The analytic interval, labelled, when another method leads. */
  analytic: string | null
  /** Limits of the method the reader must know (smallest p, unbounded interval), or null. */
  limits: string | null
}

export function inferenceText(result: Pick<EstimateResult, 'effect' | 'inference' | 'vcov'>): InferenceText {
  const inf = result.inference
  const e = result.effect
  const level = Math.round((inf?.level ?? 0.95) * 100)
  const method = inf ? METHOD_LABELS[inf.method] : METHOD_LABELS.analytic
  const interval = e.ciLow !== null && e.ciHigh !== null ? `${level}% interval ${num(e.ciLow)} to ${num(e.ciHigh)} (${method})` : `no ${level}% interval: ${method} cannot bound the effect with this few comparisons`
  const pText = e.p < 0.001 ? 'p < 0.001' : `p = ${e.p.toFixed(3)}`
  const p = `${pText} (${method})`
  let analytic: string | null = null
  if (inf && inf.method !== 'analytic' && e.se !== null && e.df !== null) {
    const kind = result.vcov === 'hac' ? 'Newey-West' : result.vcov === 'cluster' ? 'cluster-robust' : 'model-based'
    const ci = inf.analytic ? `95% interval ${num(inf.analytic.ciLow)} to ${num(inf.analytic.ciHigh)}, ` : ''
    analytic = `analytic (${kind}): ${ci}SE ${num(e.se)}; shown for reference, it runs too narrow with few treated units`
  }
  let limits: string | null = null
  if (inf?.pMin) {
    const n = inf.method === 'permutation' ? inf.draws : null
    limits = n !== null ? `With ${n} placebo${n === 1 ? '' : 's'} no p-value can fall below ${inf.pMin.toFixed(3)}${inf.pMin > 1 - inf.level ? `, so this test cannot reach ${(1 - inf.level).toFixed(2)}` : ''}.` : null
  }
  return { method, interval, p, reason: inf?.reason ?? 'analytic errors', analytic, limits }
}

export interface InterventionRef {
  period: string
  label: string
}

/**
 * Readable names of the terms that carry an intervention's change: its level_k / slope_k (or
 * level / slope) and did phase_k, each with the intervention's own label and date. `breaks` are
 * the periods in the order of the terms (its.breaks sorted; for phases the start, then each
 * phase start).
 */
export function termLabels(breaks: string[], interventions: InterventionRef[], startLabel = 'Start'): Record<string, string> {
  const name = (period: string, k: number) => {
    const hit = interventions.find((i) => i.period === period)
    return `${hit ? hit.label : k === 0 ? startLabel : 'Intervention'} (${period})`
  }
  const out: Record<string, string> = {}
  const several = breaks.length > 1
  if (breaks.length) out.treatment = `${name(breaks[0]!, 0)}: effect`
  breaks.forEach((b, k) => {
    const n = name(b, k)
    out[several ? `level_${k + 1}` : 'level'] = `${n}: change in level`
    out[several ? `slope_${k + 1}` : 'slope'] = `${n}: change in trend per period`
    out[`phase_${k + 1}`] = `${n}: effect${k + 1 < breaks.length ? ` until ${breaks[k + 1]}` : ''}`
    if (k > 0) out[`phase_${k + 1}_vs_${k}`] = `${n}: added to the effect before it`
  })
  return out
}

/** The periods behind the intervention terms of a stored spec. */
export function breaksOfSpec(spec: { design?: unknown; start?: unknown; its?: { breaks?: unknown[] }; did?: { phases?: unknown[] } }): string[] {
  if (spec.design === 'its') return (spec.its?.breaks ?? (spec.start !== undefined && typeof spec.start !== 'object' ? [spec.start] : [])).map(String).sort()
  const starts = typeof spec.start === 'object' && spec.start !== null ? [...new Set(Object.values(spec.start as Record<string, string>).map(String))].sort() : null
  // jurisdictions that start at different times have no one date to name the effect by
  if (starts && starts.length > 1) return []
  const start = starts ? starts[0] : spec.start
  if (start === undefined) return []
  return [String(start), ...(spec.did?.phases ?? []).map(String).sort()]
}
