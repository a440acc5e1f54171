/**
 * Client helpers of the Robustness step: the newest check of each kind, the newest finished
 * result of each kind, and the rows and scale of the dot-and-interval charts. Pure.
 */
import { ROBUSTNESS_KINDS, type RobustnessKind, type RobustnessResult } from '#shared/engine/robustness'

export interface RobustnessCheck {
  id: number
  studyId: number
  runId: number | null
  kind: RobustnessKind
  spec: Record<string, unknown>
  fingerprint: string | null
  status: 'queued' | 'running' | 'done' | 'failed' | 'cancelled'
  progress: number
  message: string | null
  result: RobustnessResult | null
  jobId: string | null
  createdAt: string
  updatedAt: string
  createdBy: string | null
}

export const isActive = (c: Pick<RobustnessCheck, 'status'>) => c.status === 'queued' || c.status === 'running'

/** The newest check of each kind (the list comes newest first), in the order of the kinds. */
export function latestByKind(checks: readonly RobustnessCheck[]): RobustnessCheck[] {
  return ROBUSTNESS_KINDS.map(k => checks.find(c => c.kind === k)).filter((c): c is RobustnessCheck => !!c)
}

/** The newest finished result of each kind. */
export function doneByKind(checks: readonly RobustnessCheck[]): Partial<Record<RobustnessKind, RobustnessCheck>> {
  const out: Partial<Record<RobustnessKind, RobustnessCheck>> = {}
  for (const c of checks) if (c.status === 'done' && c.result && !out[c.kind]) out[c.kind] = c
  return out
}

export interface ForestRow {
  label: string
  estimate: number | null
  low?: number | null
  high?: number | null
  /** Drawn in the treated colour (the actual effect, the most influential donors). */
  strong?: boolean
  note?: string | null
}

/** A linear scale over every value shown (and zero unless told not to), padded 6% each side: value -> 0..100. */
export function forestScale(rows: readonly ForestRow[], marks: readonly (number | null | undefined)[] = [], includeZero = true) {
  const values = [...(includeZero ? [0] : []), ...marks, ...rows.flatMap(r => [r.estimate, r.low, r.high])].filter((v): v is number => typeof v === 'number' && Number.isFinite(v))
  let lo = Math.min(...values)
  let hi = Math.max(...values)
  if (hi === lo) {
    lo -= 1
    hi += 1
  }
  const pad = (hi - lo) * 0.06
  lo -= pad
  hi += pad
  return { lo, hi, at: (v: number) => ((v - lo) / (hi - lo)) * 100 }
}

/** Rows of the placebo-in-time chart: each fake start, then the actual start. */
export function placeboTimeRows(r: Extract<RobustnessResult, { kind: 'placebo_time' }>): ForestRow[] {
  return [
    ...r.fakes.map(f => ({ label: f.start, estimate: f.estimate, note: f.note })),
    { label: `${r.actual.start} (actual)`, estimate: r.actual.estimate, strong: true },
  ]
}

/** Rows of the leave-one-out chart: one per donor left out, most influential first. */
export function leaveOneOutRows(r: Extract<RobustnessResult, { kind: 'leave_one_out' }>): ForestRow[] {
  const top = new Set(r.mostInfluential)
  const tie = 1e-12 * (1 + Math.abs(r.full))
  return [...r.rows]
    .sort((a, b) => {
      const d = Math.abs(b.change ?? 0) - Math.abs(a.change ?? 0)
      return Math.abs(d) > tie ? d : a.unit < b.unit ? -1 : 1
    })
    .map(x => ({ label: `without ${x.unit}`, estimate: x.estimate, strong: top.has(x.unit), note: x.note }))
}

/** Rows of the pools chart: estimate and interval per pool. */
export function poolRows(r: Extract<RobustnessResult, { kind: 'pools' }>): ForestRow[] {
  return r.pools.map(p => ({ label: `${p.label} (${p.units.length})`, estimate: p.estimate, low: p.ciLow, high: p.ciHigh, strong: p.name === 'run', note: p.note }))
}
