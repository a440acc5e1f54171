/**
 * The computation's warnings in plain words. A design writes its warnings as short technical
 * sentences (option names, formulas, counts); a reader deciding on a policy needs what it means
 * for them first, and the technical sentence one click away. Pure; shared by the server and
 * the browser; works on runs stored before this file existed, since it reads only the text.
 *
 *   explainWarning('only 3 treated clusters: cluster-robust errors may be ...')
 *   -> { message: 'Only 3 treated jurisdictions: ...', detail: 'only 3 treated clusters: ...' }
 *
 * A warning no rule knows is shown as it is (sentence case), without a detail.
 */
import type { ResultWarning } from '../engine/result'

type Rule = [RegExp, (m: RegExpMatchArray, w: string) => ResultWarning]

const n = (s: string | undefined) => Number(s ?? 0)
const plural = (k: number, one: string, many = `${one}s`) => `${k} ${k === 1 ? one : many}`

const RULES: Rule[] = [
  [/^Newey-West errors use a lag of (\d+) periods? \(the usual rule of thumb for a series of (\d+) periods\)/, m => ({
    message: `The standard errors allow each period to be related to the ${plural(n(m[1]), 'period')} before it: a standard choice for a series of ${m[2]} periods.`,
    detail: `its.hacLag not given: Newey-West lag ${m[1]} from the rule of thumb floor(4 (N/100)^(2/9)) with N = ${m[2]}. Set its.hacLag in the run options to choose another lag.`,
  })],
  [/^only (\d+) periods: segmented regression with Newey-West errors needs a long series/, (m, w) => ({
    message: `The series is short (${m[1]} periods): an interrupted time series on so few periods can mislead. Common practice asks for at least 24.`,
    detail: w,
  })],
  [/^only (\d+) periods: .*(Durbin-Watson|residual autocorrelation)/, (m, w) => ({
    message: `With ${m[1]} periods, the checks for patterns left in the errors (autocorrelation) are unreliable: do not read much into them.`,
    detail: w,
  })],
  [/^only (\d+) treated clusters?: cluster-robust errors may be unreliable/, (m, w) => ({
    message: `Only ${plural(n(m[1]), 'treated jurisdiction')}: the usual standard errors are likely too small. The interval from placebo units or the wild bootstrap is the one to read.`,
    detail: w,
  })],
  [/^only (\d+) clusters: (cluster-robust errors|even the wild cluster bootstrap)/, (m, w) => ({
    message: `Only ${plural(n(m[1]), 'jurisdiction')} in the analysis: intervals that treat each jurisdiction as one independent piece of evidence are rough with so few.`,
    detail: w,
  })],
  [/^errors are not clustered/, (_m, w) => ({
    message: 'The standard errors treat every period of a jurisdiction as independent news; values that move together over time make them too small.',
    detail: w,
  })],
  [/^one unit: errors are heteroskedasticity-robust/, (_m, w) => ({
    message: 'One jurisdiction only: its periods are treated as independent, which usually makes the interval too narrow. An interrupted time series allows for the dependence.',
    detail: w,
  })],
  [/^dropped (\d+) rows? with missing values \((.*)\)$/, (m, w) => ({
    message: `${plural(n(m[1]), 'row')} with a missing value ${n(m[1]) === 1 ? 'was' : 'were'} left out of the estimate.`,
    detail: w,
  })],
  [/^dropped (\d+) treated rows? outside the event window/, (m, w) => ({
    message: `${plural(n(m[1]), 'treated row')} fall outside the chosen event window and ${n(m[1]) === 1 ? 'was' : 'were'} left out.`,
    detail: w,
  })],
  [/^treated units start at different periods: the two-way/, (_m, w) => ({
    message: 'The treated jurisdictions started at different times: a single two-way estimate can mislead when effects grow or fade. The staggered design (effects by cohort) avoids this.',
    detail: w,
  })],
  [/^the standard error shown \((.*)\) is the analytic one; the p-value and interval come from (.*)$/, (m, w) => ({
    message: `The standard error shown is the model's own; the interval and p-value come from ${m[2]}, which suit this study better.`,
    detail: w,
  })],
  [/^only (\d+) donors: the placebo p-value cannot go below/, (m, w) => ({
    message: `Only ${plural(n(m[1]), 'comparison jurisdiction')}: the placebo check cannot show a result below 5% however large the effect.`,
    detail: w,
  })],
  [/^placebo sets limited to (\d+) drawn at random/, (m, w) => ({
    message: `The placebo check used ${m[1]} sets drawn at random rather than every possible one; rerunning with the same seed gives the same answer.`,
    detail: w,
  })],
  [/^the counts vary ([\d.]+) times as much as a Poisson model allows/, (_m, w) => ({
    message: 'The counts vary more than the Poisson model assumes, so its intervals are too narrow: choose the quasi-Poisson model.',
    detail: w,
  })],
  [/^(its\.hacLag|clusterColumn|eventWindow|spec\.covariates).* (is|are) (ignored|not used)/, (_m, w) => ({
    message: 'An option was set that this design does not use; it made no difference to the result.',
    detail: w,
  })],
  [/^the decomposition of the two-way estimate .* is not shown/, (_m, w) => ({
    message: 'The breakdown of the two-way estimate into its comparisons is not shown for this run.',
    detail: w,
  })],
  [/^(the weights are not unique|the comparison weights are not unique)/, (_m, w) => ({
    message: 'More than one mix of comparison jurisdictions fits the period before the policy equally well; the estimate depends on which mix was found.',
    detail: w,
  })],
]

function sentence(w: string): string {
  const t = w.trim()
  const s = t.charAt(0).toUpperCase() + t.slice(1)
  return /[.!?]$/.test(s) ? s : `${s}.`
}

/** A warning as a plain message with the technical text as its detail (null when the message is the text). */
export function explainWarning(w: string | ResultWarning): ResultWarning {
  if (typeof w !== 'string') return w
  for (const [pattern, explain] of RULES) {
    const m = w.match(pattern)
    if (m) return explain(m, w)
  }
  return { message: sentence(w), detail: null }
}

/** One line for print and workbooks: the plain message, then the detail in brackets. */
export function warningText(w: string | ResultWarning): string {
  const e = explainWarning(w)
  return e.detail ? `${e.message} [Detail: ${e.detail}]` : e.message
}
