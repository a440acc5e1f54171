/**
 * Instrumentation: did the way the outcome is counted change? Two figures.
 *
 * 1. Revisions between data releases: for every cell (unit, period) of the study published in
 *    more than one release, the values in release order. A cell is revised when a later value
 *    differs from the first; its relative change is max_k |v_k - v_1| / |v_1| (v_1 = 0: counted,
 *    no relative change). Reported: cells seen in several releases, revised cells (all, and the
 *    treated units'), the largest relative change.
 *
 * 2. A level break in the comparison series at the start: OLS of the pool mean (pre and post)
 *    on [1, time, step], step = 1 from the start on, Newey-West errors at the rule-of-thumb lag
 *    floor(4 (T/100)^(2/9)) (Newey and West 1994; regression.ts). A break in the units that
 *    did not adopt the policy points to a change in counting (or a shared shock) at that date.
 *
 * Verdict: "weakens" when a treated unit's cells were revised by more than 5%, or the
 * comparison breaks at the start with p < 0.01; "supports" when no cell changed by more than
 * 1% and the break has p >= 0.05; otherwise "cannot tell". The 1% and 5% cut-offs are our rule.
 */
import type { ThreatEvidence } from '../../../shared/engine/threats'
import { isEngineError } from '../errors'
import { coefficientOf, fitLinearModel } from '../regression'
import { num, pct } from './basics'
import { type StudySeries, checkStudySeries } from './studySeries'

export interface RevisedCell {
  unit: string
  period: string
  /** The cell's values in release order (oldest first). */
  values: number[]
}

export interface RevisionSummary {
  /** Cells published in more than one release. */
  repeated: number
  revised: number
  revisedTreated: number
  maxRelative: number | null
  maxRelativeTreated: number | null
  largest: { unit: string, period: string, from: number, to: number } | null
}

export function revisionSummary(cells: RevisedCell[], treated: string[]): RevisionSummary {
  const isTreated = new Set(treated)
  const out: RevisionSummary = { repeated: 0, revised: 0, revisedTreated: 0, maxRelative: null, maxRelativeTreated: null, largest: null }
  for (const c of cells) {
    if (c.values.length < 2) continue
    out.repeated++
    const first = c.values[0]!
    let changed = false
    let rel = 0
    let to = first
    for (const v of c.values.slice(1)) {
      if (v !== first) changed = true
      if (first !== 0 && Math.abs(v - first) / Math.abs(first) >= rel) {
        rel = Math.abs(v - first) / Math.abs(first)
        to = v
      }
    }
    if (!changed) continue
    out.revised++
    if (isTreated.has(c.unit)) out.revisedTreated++
    if (first === 0) continue
    if (out.maxRelative === null || rel > out.maxRelative) {
      out.maxRelative = rel
      out.largest = { unit: c.unit, period: c.period, from: first, to }
    }
    if (isTreated.has(c.unit) && (out.maxRelativeTreated === null || rel > out.maxRelativeTreated)) out.maxRelativeTreated = rel
  }
  return out
}

/** Level shift of the pool mean at the start: step estimate, its SE and p (null when it cannot be fitted). */
export function comparisonBreak(s: StudySeries): { estimate: number, se: number, p: number, lag: number } | null {
  checkStudySeries(s, 'comparisonBreak')
  const y: number[] = []
  const time: number[] = []
  const step: number[] = []
  for (let t = 0; t < s.periods.length; t++) {
    const v = s.pool[t]!
    if (!Number.isFinite(v)) continue
    y.push(v)
    time.push(t + 1)
    step.push(t >= s.nPre ? 1 : 0)
  }
  const lag = Math.floor(4 * (y.length / 100) ** (2 / 9))
  try {
    const fit = fitLinearModel({
      y: Float64Array.from(y),
      terms: [{ name: 'time', values: Float64Array.from(time) }, { name: 'step', values: Float64Array.from(step) }],
      intercept: true,
      covariance: { kind: 'hac', lag },
    })
    const c = coefficientOf(fit, 'step')
    return Number.isFinite(c.p) ? { estimate: c.estimate, se: c.se, p: c.p, lag } : null
  }
  catch (e) {
    if (isEngineError(e)) return null
    throw e
  }
}

const pText = (p: number) => (p < 0.001 ? 'p < 0.001' : `p = ${p.toFixed(3)}`)

export function instrumentationEvidence(s: StudySeries, cells: RevisedCell[], treated: string[]): ThreatEvidence {
  const r = revisionSummary(cells, treated)
  const b = comparisonBreak(s)
  const bigTreated = (r.maxRelativeTreated ?? 0) > 0.05
  const breaks = b !== null && b.p < 0.01
  const quietRevisions = (r.maxRelative ?? 0) <= 0.01
  const verdict = bigTreated || breaks ? 'weakens' : quietRevisions && b !== null && b.p >= 0.05 ? 'supports' : 'unclear'
  const revText = r.repeated === 0
    ? 'No value of the study was published in more than one release'
    : `${r.revised} of ${r.repeated} values published in several releases were revised${r.revised ? ` (${r.revisedTreated} of the treated units'; largest change ${pct(r.maxRelative ?? 0)}${r.largest ? `, ${r.largest.unit} ${r.largest.period}: ${num(r.largest.from)} to ${num(r.largest.to)}` : ''})` : ''}`
  const breakText = b ? `the comparison's level shifted by ${num(b.estimate)} at the start (${pText(b.p)})` : 'the comparison\'s level shift at the start could not be estimated'
  return {
    threat: 'instrumentation',
    verdict,
    figure: `${revText}; ${breakText}.`,
    explanation: verdict === 'weakens'
      ? (bigTreated ? 'The treated unit\'s figures were revised materially between releases: check whether the counting rules changed. ' : '') + (breaks ? 'Units without the policy jumped at the same date: a change in how the outcome is recorded is one explanation.' : '')
      : verdict === 'supports'
        ? `${r.repeated === 0 ? 'With one release per value, revisions cannot be checked; ' : 'The figures were stable between releases and '}the comparison shows no jump at the start. A change in counting that hit only the treated unit would not show here.`
        : 'Small revisions or a weak jump in the comparison: neither clear nor absent; read the source notes on definitions.',
    rule: 'Weakens when the treated units\' values were revised by more than 5% between releases or the comparison\'s level breaks at the start with p < 0.01; supports when no value changed by more than 1% and the break has p >= 0.05; cannot tell otherwise.',
    figures: { cellsInSeveralReleases: r.repeated, revisedCells: r.revised, revisedTreatedCells: r.revisedTreated, maxRelativeRevision: r.maxRelative, comparisonBreak: b?.estimate ?? null, comparisonBreakP: b?.p ?? null },
    strip: null,
    link: { step: 'trends', anchor: 'levels', label: 'Pool mean on the Trends step' },
  }
}
