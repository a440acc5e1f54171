/**
 * Difference-in-differences.
 *
 * form "twfe" (default): two-way fixed effects,
 *   y_it = a_i + g_t + beta * D_it + x_it' c + e_it,
 * with D_it = 1 for a treated unit from its start on (or the treatmentColumn, binary or
 * continuous), unit effects a_i and period effects g_t (fixedEffects "unit": a_i only),
 * fitted by the within transformation, clustered by unit (CR1, smallSample as specified).
 *
 * form "2x2": the pooled regression y = b0 + b1 treated + b2 post + beta treated*post (+ x'c),
 * whose interaction equals the difference of the four cell means
 * (treated post - treated pre) - (control post - control pre) (Card and Krueger 1994 is
 * the classic example), clustered by unit. Needs one start shared by all treated units.
 *
 * Phases (spec.did.phases, twfe form only): later interventions split the treated period.
 * With phase starts p_1 < p_2 < ... (each after every treated unit's start), the single
 * treatment term is replaced by
 *   phase_1 = 1 for a treated unit from its start until p_1 (exclusive),
 *   phase_k = 1 for a treated unit from p_{k-1} until p_k (exclusive), the last one open,
 * each estimated against the comparison units in the same two-way model; the effect is
 * phase_1, and the coefficients add phase_k_vs_(k-1) = phase_k - phase_(k-1), the change each
 * later intervention adds (its SE from the covariance). On a balanced panel with one common start each phase_k is the mean treated-minus-
 * comparison gap over its periods less the mean gap before the start, so the single
 * treatment estimate is the period-weighted mean of the phase estimates.
 *
 * Both report the pre-trend slope difference (preTrend.ts) when there are enough
 * pre-periods. With starts that differ across units the TWFE estimate is a weighted mix of
 * comparisons that can mislead when effects change over time (Goodman-Bacon 2021); a
 * warning says so.
 *
 * Throws EngineError: 'invalid_spec' (no treated units, no start, 2x2 with several starts,
 * phases with the 2x2 form or a treatmentColumn, a phase start not after the start or with
 * no treated rows from it on),
 * 'no_pre_periods', 'no_post_periods', and what the regression throws.
 */
import type { DecompositionRow, EstimateResult, GroupMeans } from '../../../shared/engine/result'
import { alreadyTreatedWarning, baconDecomposition, denseStart } from '../bacon'
import type { Spec } from '../../../shared/engine/spec'
import { EngineError } from '../errors'
import { type Panel, periodLabel, periodOrdinal } from '../panel'
import { preTrendSlopeDiff } from '../preTrend'
import { type Term, coefficientOf, fitLinearModel, linearCombination } from '../regression'
import { countTreatedUnits, makeResult } from '../report'
import { type Roles, type Sample, clusterWarnings, covarianceFor, requirePrePost, resolveRoles, selectSample, treatmentIndicator } from '../sample'

function cellMeans(sample: Sample, treated: Float64Array, post: Float64Array): GroupMeans {
  const sum = [0, 0, 0, 0]
  const cnt = [0, 0, 0, 0]
  for (let i = 0; i < sample.n; i++) {
    const k = (treated[i] ? 0 : 2) + (post[i] ? 1 : 0)
    sum[k] += sample.y[i]
    cnt[k]++
  }
  const m = sum.map((s, k) => (cnt[k] ? s / cnt[k] : NaN))
  return {
    treatedPre: m[0],
    treatedPost: m[1],
    controlPre: m[2],
    controlPost: m[3],
    did: m[1] - m[0] - (m[3] - m[2]),
    nCells: { treatedPre: cnt[0], treatedPost: cnt[1], controlPre: cnt[2], controlPost: cnt[3] },
  }
}

/**
 * One 0/1 term per phase (phase_1 from each treated unit's start to the first phase start,
 * phase_k from the (k-1)-th phase start to the k-th), checked against the sample.
 */
export function phaseTerms(panel: Panel, spec: Spec, roles: Roles, sample: Sample): Term[] {
  const values = spec.did.phases ?? []
  const phases = values.map((value, k) => ({ value, ordinal: periodOrdinal(panel, value, `did.phases[${k}]`) })).sort((a, b) => a.ordinal - b.ordinal)
  const latestStart = Math.max(...roles.treated.map((u) => roles.start[u]))
  const startText = roles.commonStart !== null ? `the start ${periodLabel(panel, latestStart)}` : `the latest start ${periodLabel(panel, latestStart)}`
  const early = phases.find((p) => p.ordinal <= latestStart)
  if (early) throw new EngineError('invalid_spec', `did.phases: phase start ${early.value} is not after ${startText}; each phase start marks a later intervention, after the treatment starts`)
  let lastTreated = -Infinity
  for (let i = 0; i < sample.n; i++) if (roles.isTreated[sample.unitPanel[sample.unit[i]]]) lastTreated = Math.max(lastTreated, sample.ordinal[i])
  const late = phases.find((p) => p.ordinal > lastTreated)
  if (late) throw new EngineError('invalid_spec', `did.phases: phase start ${late.value} is outside the data: the treated units' last period is ${periodLabel(panel, lastTreated)}${spec.window ? ' within the window' : ''}`)
  const bounds = [...phases.map((p) => p.ordinal), Infinity]
  const terms: Term[] = bounds.map((_, k) => ({ name: `phase_${k + 1}`, values: new Float64Array(sample.n) }))
  const rows = new Array<number>(terms.length).fill(0)
  for (let i = 0; i < sample.n; i++) {
    const u = sample.unitPanel[sample.unit[i]]
    const o = sample.ordinal[i]
    if (!roles.isTreated[u] || o < roles.start[u]) continue
    const k = bounds.findIndex((b) => o < b)
    terms[k].values[i] = 1
    rows[k]++
  }
  const empty = rows.findIndex((c) => c === 0)
  if (empty >= 0) {
    const from = empty === 0 ? startText.replace(/^the /, '') : `phase start ${phases[empty - 1].value}`
    throw new EngineError('invalid_spec', `did.phases: phase_${empty + 1} (from ${from}${empty < phases.length ? ` to ${phases[empty].value}` : ''}) has no treated rows; remove that phase start`)
  }
  return terms
}

/**
 * Goodman-Bacon (2021) decomposition of the two-way estimate when starts differ (bacon.ts):
 * only where it is defined, a balanced panel with two-way effects, a binary treatment, no
 * covariates and no phases; otherwise a warning says why it is absent.
 */
function decompositionOf(panel: Panel, spec: Spec, roles: Roles, sample: Sample, phased: boolean, warnings: string[]): DecompositionRow[] | null {
  const why = spec.covariates.length ? 'covariates' : phased ? 'phases' : spec.fixedEffects !== 'two-way' ? 'unit effects only' : sample.n !== sample.nUnits * sample.nPeriods ? 'an unbalanced panel' : null
  if (why) {
    warnings.push(`the decomposition of the two-way estimate into its two-by-two comparisons is not shown: it needs a balanced panel with two-way effects and no covariates or phases (this run has ${why})`)
    return null
  }
  const { rows } = baconDecomposition({
    y: sample.y,
    unit: sample.unit,
    nUnits: sample.nUnits,
    period: sample.period,
    nPeriods: sample.nPeriods,
    start: Float64Array.from(sample.unitPanel, (u) => denseStart(sample.periodOrdinals, roles.start[u])),
    label: (k) => periodLabel(panel, sample.periodOrdinals[k]),
  })
  const caution = alreadyTreatedWarning(rows)
  if (caution) warnings.push(caution)
  return rows
}

function covariateTerms(spec: Spec, sample: Sample): Term[] {
  return spec.covariates.map((c) => ({ name: c, values: sample.column(c) }))
}

/** The 2x2 regressors: treated (unit is treated) and post (from the window's post start or the common start). */
export function twoByTwoIndicators(roles: Roles, sample: Sample): { treated: Float64Array; post: Float64Array } {
  const treated = new Float64Array(sample.n)
  const post = new Float64Array(sample.n)
  const postFrom = roles.window ? roles.window.post[0] : roles.commonStart!
  for (let i = 0; i < sample.n; i++) {
    treated[i] = roles.isTreated[sample.unitPanel[sample.unit[i]]]
    post[i] = sample.ordinal[i] >= postFrom ? 1 : 0
  }
  return { treated, post }
}

function estimate2x2(panel: Panel, spec: Spec, roles: Roles, sample: Sample, warnings: string[]): EstimateResult {
  if (roles.commonStart === null) throw new EngineError('invalid_spec', 'did form "2x2" needs one start shared by all treated units; use form "twfe" or the event study for differing starts')
  const { treated, post } = twoByTwoIndicators(roles, sample)
  const groupMeans = cellMeans(sample, treated, post)
  for (const [k, v] of Object.entries(groupMeans.nCells)) {
    if (v === 0) throw new EngineError(k.endsWith('Pre') ? 'no_pre_periods' : 'no_post_periods', `did 2x2: the ${k.replace(/(Pre|Post)$/, ' $1').toLowerCase()} cell has no rows`)
  }
  const product = treatmentIndicator(sample, roles)
  const covariance = covarianceFor(spec, sample)
  const fit = fitLinearModel({
    y: sample.y,
    terms: [{ name: 'treated', values: treated }, { name: 'post', values: post }, { name: 'treatment', values: product }, ...covariateTerms(spec, sample)],
    intercept: true,
    covariance,
  })
  warnings.push(...clusterWarnings(spec, sample.nUnits, roles.treated.length))
  const slopeDiff = preTrendSlopeDiff(panel, spec, roles, spec.covariates, warnings)
  const effect = { term: 'treatment', ...coefficientOf(fit, 'treatment') }
  return makeResult(spec, sample, fit, covariance, effect, { groupMeans, preTrend: { wald: null, slopeDiff } }, warnings)
}

export function estimateDid(panel: Panel, spec: Spec): EstimateResult {
  const warnings: string[] = []
  const byColumn = spec.treatmentColumn !== undefined
  const twoByTwo = spec.did.form === '2x2'
  if (byColumn && twoByTwo) throw new EngineError('invalid_spec', 'did form "2x2" is defined by treated units and a start; it does not take a treatmentColumn')
  const phased = spec.did.phases !== undefined
  if (phased && twoByTwo) throw new EngineError('invalid_spec', 'did.phases needs the two-way form: the 2x2 form has one pre and one post cell and cannot split the treated period; use did form "twfe"')
  if (phased && byColumn) throw new EngineError('invalid_spec', 'did.phases splits the treated period of the treated units from their start; it does not apply to a treatmentColumn (code the phases as columns of your own instead)')
  const roles = resolveRoles(panel, spec, { requireTreated: !byColumn, requireStart: !byColumn })
  const columns = [...(byColumn ? [spec.treatmentColumn!] : []), ...spec.covariates]
  const sample = selectSample(panel, spec, roles, { columns }, warnings)
  if (!byColumn) requirePrePost(sample, roles, spec)
  if (twoByTwo) return estimate2x2(panel, spec, roles, sample, warnings)

  const name = phased ? 'phase_1' : byColumn ? spec.treatmentColumn! : 'treatment'
  const d = byColumn ? sample.column(spec.treatmentColumn!) : treatmentIndicator(sample, roles)
  const treatmentTerms = phased ? phaseTerms(panel, spec, roles, sample) : [{ name, values: d }]
  const covariance = covarianceFor(spec, sample)
  const fit = fitLinearModel({
    y: sample.y,
    terms: [...treatmentTerms, ...covariateTerms(spec, sample)],
    intercept: false,
    absorb: { unit: sample.unit, nUnits: sample.nUnits, ...(spec.fixedEffects === 'two-way' ? { period: sample.period, nPeriods: sample.nPeriods } : {}) },
    covariance,
  })
  const binary = d.every((v) => v === 0 || v === 1)
  warnings.push(...clusterWarnings(spec, sample.nUnits, binary ? countTreatedUnits(sample, d) : null))
  let decomposition: DecompositionRow[] | null = null
  if (!byColumn && roles.commonStart === null) {
    warnings.push('treated units start at different periods: the two-way fixed-effects estimate mixes comparisons and can mislead when effects change over time (Goodman-Bacon 2021); the staggered design (group-time effects) avoids that')
    decomposition = decompositionOf(panel, spec, roles, sample, phased, warnings)
  }
  const slopeDiff = byColumn ? null : preTrendSlopeDiff(panel, spec, roles, spec.covariates, warnings)
  const effect = { term: name, ...coefficientOf(fit, name) }
  const result = makeResult(spec, sample, fit, covariance, effect, { preTrend: slopeDiff ? { wald: null, slopeDiff } : null, decomposition }, warnings)
  // each later phase's change from the phase before it: phase_k - phase_(k-1), with its SE
  for (let k = 2; k < treatmentTerms.length + 1; k++) {
    result.coefficients[`phase_${k}_vs_${k - 1}`] = linearCombination(fit, { [`phase_${k}`]: 1, [`phase_${k - 1}`]: -1 })
  }
  return result
}
