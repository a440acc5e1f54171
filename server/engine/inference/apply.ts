/**
 * Puts the headline inference on a design's result: chooses the method (choose.ts), runs it,
 * and writes result.inference and effect.p / ciLow / ciHigh (effect.se stays the analytic SE).
 * A design that computes its own inference (the weighted comparison) has set result.inference
 * already and is left as it is.
 *
 * `refit` runs the same design on the same panel with another spec (analytic inference): the
 * placebo path for any design. A fast exact path replaces the refits for two-way fixed effects
 * (or the 2x2) on a balanced panel with one start and no covariates, where the estimate is
 * (mean post - mean pre) of the treated units minus the same for the pool; it is used only
 * after it reproduces the actual estimate to 1e-9.
 */
import type { EstimateResult, InferenceResult, Placebo } from '../../../shared/engine/result'
import type { Spec } from '../../../shared/engine/spec'
import { tQuantileAt } from '../distributions'
import { isEngineError } from '../errors'
import { type Panel, periodOrdinal } from '../panel'
import { seededRandom } from '../random'
import { type Roles, resolveRoles } from '../sample'
import { type Choice, type Situation, chooseInference } from './choose'
import { gapOf, outcomeMatrix, type OutcomeMatrix } from './outcomeMatrix'
import { permutationOutcome, placeboSets, rmspeRatio } from './permutation'
import { didWildBootstrap } from './bootstrapDid'

export type Refit = (spec: Spec) => EstimateResult

/**
 * Placebo re-estimates beyond this many are drawn at random (each is a full estimate of the
 * design; 199 placebos still resolve p to 0.005, and a 95% interval from the 10th largest).
 */
export const MAX_REFITS = 199

function rolesFor(panel: Panel, spec: Spec): Roles {
  if (spec.design === 'its') {
    const treated = spec.treated.length ? spec.treated : panel.units.length === 1 ? [panel.units[0]] : []
    const comparison = spec.its?.comparison && spec.its.comparison !== 'none' ? (spec.comparison ?? panel.units.filter((u) => !treated.includes(u))) : []
    return resolveRoles(panel, { ...spec, treated, comparison, start: undefined }, { requireTreated: false, requireStart: false })
  }
  return resolveRoles(panel, spec, { requireTreated: false, requireStart: false })
}

function treatedClusterCount(panel: Panel, spec: Spec, roles: Roles): number | null {
  if (!spec.clusterColumn) return null
  const col = panel.columns[spec.clusterColumn]
  if (!col) return null
  const seen = new Set<number>()
  for (let r = 0; r < panel.nRows; r++) if (roles.isTreated[panel.unit[r]] && !Number.isNaN(col[r])) seen.add(col[r])
  return seen.size
}

export function situationOf(panel: Panel, spec: Spec, result: EstimateResult, roles: Roles): Situation {
  return {
    design: spec.design,
    itsComparison: spec.its?.comparison ?? 'none',
    nTreated: roles.treated.length,
    nComparison: roles.comparison.length,
    nClusters: result.nClusters,
    nTreatedClusters: treatedClusterCount(panel, spec, roles),
    byColumn: spec.treatmentColumn !== undefined,
  }
}

/** First post ordinal: the window's post start, the first break (its) or the earliest start. */
function postFrom(panel: Panel, spec: Spec, roles: Roles): number {
  if (roles.window) return roles.window.post[0]
  if (spec.design === 'its') {
    const b = spec.its?.breaks ?? (spec.start !== undefined && typeof spec.start !== 'object' ? [spec.start] : [])
    return Math.min(...b.map((v, k) => periodOrdinal(panel, v, `its.breaks[${k}]`)))
  }
  return Math.min(...roles.treated.map((u) => roles.start[u]))
}

function analytic(result: EstimateResult, choice: Choice, level: number): InferenceResult {
  const e = result.effect
  let ciLow = e.ciLow
  let ciHigh = e.ciHigh
  if (level !== 0.95 && e.se !== null && e.df !== null) {
    const q = tQuantileAt(1 - (1 - level) / 2, e.df)
    ciLow = e.estimate - q * e.se
    ciHigh = e.estimate + q * e.se
  }
  return { method: 'analytic', reason: choice.reason, level, p: e.p, ciLow, ciHigh, draws: null, enumerated: null, weights: null, seed: null, pRatio: null, ratio: null, pMin: null, placebos: null, gaps: null }
}

/** (mean post - mean pre) per matrix row, for the fast path. */
function preToPost(m: OutcomeMatrix, post: Uint8Array): Float64Array {
  const n = m.units.length
  const out = new Float64Array(n)
  for (let r = 0; r < n; r++) {
    let a = 0
    let na = 0
    let b = 0
    let nb = 0
    for (let t = 0; t < m.nT; t++) {
      const v = m.y[r * m.nT + t]
      if (post[t]) {
        a += v
        na++
      } else {
        b += v
        nb++
      }
    }
    out[r] = a / na - b / nb
  }
  return out
}

function fastPathApplies(spec: Spec, roles: Roles, m: OutcomeMatrix): boolean {
  return (
    spec.design === 'did' &&
    m.balanced &&
    spec.covariates.length === 0 &&
    !spec.treatmentColumn &&
    !spec.did.phases &&
    roles.commonStart !== null &&
    (spec.did.form === '2x2' || spec.fixedEffects === 'two-way')
  )
}

/** Terms that carry an intervention's change, tested by the same placebos as the headline. */
const INTERVENTION_TERM = /^(level_\d+|phase_\d+|phase_\d+_vs_\d+)$/

interface PlaceboRun {
  /** Per intervention term, the placebos' values of that term. */
  termPlacebos: Record<string, number[]>
  placebos: Placebo[]
  gaps: InferenceResult['gaps']
  enumerated: boolean
  skipped: string[]
  leadChi2: number[]
  actualRatio: number | null
}

function runPlacebos(panel: Panel, spec: Spec, result: EstimateResult, roles: Roles, refit: Refit, warnings: string[]): PlaceboRun {
  const treated = roles.treated
  const comparison = roles.comparison
  const k = treated.length
  const units = [...treated, ...comparison]
  const m = outcomeMatrix(panel, spec, roles, units)
  const from = postFrom(panel, spec, roles)
  const post = new Uint8Array(m.nT)
  for (let t = 0; t < m.nT; t++) post[t] = m.ordinals[t] >= from ? 1 : 0
  const tRows = treated.map((_, i) => i)
  const cRows = comparison.map((_, j) => k + j)
  const demean = true
  const actualGap = gapOf(m, tRows, cRows)
  const actualRatio = rmspeRatio(actualGap, post, demean)

  let fast: Float64Array | null = null
  if (fastPathApplies(spec, roles, m)) {
    const dd = preToPost(m, post)
    const mean = (rows: number[]) => rows.reduce((s, r) => s + dd[r], 0) / rows.length
    const check = mean(tRows) - mean(cRows)
    if (Math.abs(check - result.effect.estimate) <= 1e-9 * (1 + Math.abs(result.effect.estimate))) fast = dd
  }
  const rng = seededRandom(spec.inference.seed)
  const limit = fast ? spec.inference.draws : Math.min(spec.inference.draws, MAX_REFITS)
  const { sets, enumerated } = placeboSets(comparison.length, k, limit, rng)
  if (!fast && !enumerated && limit < spec.inference.draws) {
    warnings.push(`placebo sets limited to ${MAX_REFITS} drawn at random (seed ${spec.inference.seed}): each one is a full re-estimate of this design`)
  }
  const placebos: Placebo[] = []
  const skipped: string[] = []
  const leadChi2: number[] = []
  const termNames = Object.keys(result.coefficients).filter((t) => INTERVENTION_TERM.test(t) && t !== result.effect.term)
  const termPlacebos: Record<string, number[]> = Object.fromEntries(termNames.map((t) => [t, []]))
  const gapPaths: { unit: string; gap: (number | null)[] }[] = []
  let ddPoolSum = 0
  if (fast) for (const r of cRows) ddPoolSum += fast[r]
  const startValue = (u: number) => panel.periods.find((p) => p.ordinal === roles.start[u])?.canonical ?? String(roles.start[u])
  for (const set of sets) {
    const fakeRows = set.map((j) => k + j)
    const inSet = new Set(set)
    const poolRows = cRows.filter((_, j) => !inSet.has(j))
    const name = set.map((j) => panel.units[comparison[j]]).join('+')
    if (!poolRows.length) {
      skipped.push(name)
      continue
    }
    const gap = gapOf(m, fakeRows, poolRows)
    const ratio = rmspeRatio(gap, post, demean)
    let estimate: number
    if (fast) {
      let s = 0
      for (const r of fakeRows) s += fast[r]
      estimate = s / fakeRows.length - (ddPoolSum - s) / poolRows.length
    } else {
      const fakeNames = set.map((j) => panel.units[comparison[j]])
      const placeboSpec: Spec = {
        ...spec,
        treated: fakeNames,
        comparison: poolRows.map((r) => panel.units[m.units[r]]),
        start:
          spec.design === 'its' || spec.start === undefined || typeof spec.start !== 'object'
            ? spec.start
            : Object.fromEntries(fakeNames.map((f, i) => [f, startValue(treated[i])])),
        // analytic inside each placebo, and the fewest band draws (staggered): only the estimate is used
        inference: { ...spec.inference, method: 'analytic', draws: 99 },
      }
      try {
        const r = refit(placeboSpec)
        estimate = r.effect.estimate
        for (const t of termNames) {
          const c = r.coefficients[t]
          if (c) termPlacebos[t].push(c.estimate)
        }
        const chi2 = r.preTrend?.wald?.chi2
        if (chi2 !== undefined && Number.isFinite(chi2)) leadChi2.push(chi2)
      } catch (e) {
        if (!isEngineError(e)) throw e
        skipped.push(name)
        continue
      }
    }
    placebos.push({ unit: name, estimate, ratio })
    if (k === 1) gapPaths.push({ unit: name, gap: demeaned(gap, post) })
  }
  const periods = m.periods.map((p) => panel.periods[p].canonical)
  const gaps = k === 1 ? { periods, treated: demeaned(actualGap, post), placebos: gapPaths } : null
  return { termPlacebos, placebos, gaps, enumerated, skipped, leadChi2, actualRatio }
}

/** The gap minus its pre-period mean, with null for missing periods (JSON-safe). */
function demeaned(gap: Float64Array, post: Uint8Array): (number | null)[] {
  let s = 0
  let c = 0
  for (let t = 0; t < gap.length; t++) {
    if (!post[t] && !Number.isNaN(gap[t])) {
      s += gap[t]
      c++
    }
  }
  const mean = c ? s / c : 0
  return Array.from(gap, (g) => (Number.isNaN(g) ? null : g - mean))
}

function permutation(panel: Panel, spec: Spec, result: EstimateResult, roles: Roles, choice: Choice, refit: Refit): InferenceResult {
  const warnings = result.warnings
  const level = spec.inference.level
  const run = runPlacebos(panel, spec, result, roles, refit, warnings)
  if (run.skipped.length) warnings.push(`${run.skipped.length} placebo${run.skipped.length > 1 ? 's' : ''} could not be estimated and ${run.skipped.length > 1 ? 'were' : 'was'} left out (${run.skipped.slice(0, 5).join(', ')}${run.skipped.length > 5 ? ', ...' : ''})`)
  if (!run.placebos.length) {
    warnings.push('no placebo could be estimated: the interval shown is the analytic one')
    return analytic(result, { method: 'analytic', reason: `${choice.reason}; but no placebo could be estimated, so the analytic interval is shown` }, level)
  }
  const out = permutationOutcome({ estimate: result.effect.estimate, ratio: run.actualRatio }, run.placebos, level)
  const n = run.placebos.length
  if (out.ciLow === null) {
    warnings.push(
      `with ${n} placebo${n > 1 ? 's' : ''} the smallest possible p-value is 1/${n + 1} = ${(1 / (n + 1)).toFixed(3)}, so no ${Math.round(level * 100)}% interval can be bounded: no method can be trusted to tell this effect from noise; add comparison units or report the estimate as descriptive`,
    )
  }
  if (run.leadChi2.length && result.preTrend?.wald) {
    const a = result.preTrend.wald.chi2
    const over = run.leadChi2.filter((c) => c >= a * (1 - 1e-9)).length
    result.preTrend.leadPermutation = { p: (1 + over) / (1 + run.leadChi2.length), nPlacebos: run.leadChi2.length, pMin: 1 / (1 + run.leadChi2.length) }
  }
  const terms: NonNullable<InferenceResult['terms']> = {}
  for (const [t, values] of Object.entries(run.termPlacebos)) {
    if (!values.length) continue
    const est = result.coefficients[t].estimate
    const o = permutationOutcome({ estimate: est, ratio: null }, values.map((v, i) => ({ unit: String(i), estimate: v, ratio: null })), level)
    terms[t] = { estimate: est, p: o.p, ciLow: o.ciLow, ciHigh: o.ciHigh }
  }
  return {
    method: 'permutation',
    reason: choice.reason,
    level,
    terms: Object.keys(terms).length ? terms : null,
    p: out.p,
    ciLow: out.ciLow,
    ciHigh: out.ciHigh,
    draws: n,
    enumerated: run.enumerated,
    weights: null,
    seed: run.enumerated ? null : spec.inference.seed,
    pRatio: out.pRatio,
    ratio: run.actualRatio,
    pMin: out.pMin,
    placebos: run.placebos,
    gaps: run.gaps,
  }
}

/** Drops the old advice to use resampling once resampling stands behind the headline. */
function tidyWarnings(result: EstimateResult, method: InferenceResult['method']): void {
  if (method === 'analytic') return
  result.warnings = result.warnings.filter((w) => !/treated cluster.*cluster-robust errors may be unreliable/.test(w))
  const kind = { hac: 'Newey-West', cluster: 'cluster-robust', influence: 'influence-function', hc1: 'heteroskedasticity-robust', iid: 'model-based' }[result.vcov] ?? 'model-based'
  result.warnings.push(`the standard error shown (${kind}) is the analytic one; the p-value and interval come from ${method === 'permutation' ? 'placebo units' : 'the wild cluster bootstrap'}`)
}

export function applyInference(panel: Panel, spec: Spec, result: EstimateResult, refit: Refit): EstimateResult {
  if (result.inference) return result
  const roles = rolesFor(panel, spec)
  const choice = chooseInference(spec, situationOf(panel, spec, result, roles))
  let inference: InferenceResult
  if (choice.method === 'permutation') inference = permutation(panel, spec, result, roles, choice, refit)
  else if (choice.method === 'wild_bootstrap') inference = didWildBootstrap(panel, spec, result, choice)
  else inference = analytic(result, choice, spec.inference.level)
  const e = result.effect
  if (inference.method !== 'analytic' && e.ciLow !== null && e.ciHigh !== null) inference.analytic = { p: e.p, ciLow: e.ciLow, ciHigh: e.ciHigh }
  if (inference.method !== 'analytic') {
    result.effect.p = inference.p
    result.effect.ciLow = inference.ciLow
    result.effect.ciHigh = inference.ciHigh
  } else {
    result.effect.ciLow = inference.ciLow
    result.effect.ciHigh = inference.ciHigh
  }
  tidyWarnings(result, inference.method)
  if (inference.method === 'wild_bootstrap' && result.nClusters !== null && result.nClusters < 10) {
    result.warnings.push(`only ${result.nClusters} clusters: even the wild cluster bootstrap is unreliable with so few (common practice: about 10 or more); treat the interval as rough`)
  }
  result.inference = inference
  return result
}
