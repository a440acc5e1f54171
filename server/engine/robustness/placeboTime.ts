/**
 * Placebo in time: the run's design re-estimated on pre-period data only, with a fake start
 * date at every pre-period that leaves at least `minDistance` periods (default 3) on each side
 * of it inside the pre-period. A policy that had no effect before it started should show
 * fake effects scattered around zero; an actual effect that is not larger than most fake ones
 * is hard to tell from the drift the design does not capture (the "in-time placebo" of the
 * program-evaluation literature, e.g. Abadie, Diamond and Hainmueller 2015, AJPS 59: 495-510).
 *
 *   share = #{fakes with |fake| >= |actual|} / #{fakes estimated}      (ties count, slack 1e-9)
 *
 * Like is compared with like: in "did" every estimate, the actual one included, uses matched
 * windows of h = min(minDistance, post-periods) periods before and h from its start. Without
 * this the actual effect (the whole pre- and post-period) and the fakes (pre-period splits)
 * differ in length, and a gap that drifts makes the actual effect look unusual far more often
 * than the level says: on real panels with null adopters (npm run bench, evidence bench) the
 * share was <= 0.05 for 44-60% of units where about 10-17% is expected. Other designs keep
 * their own windows (a weighted comparison needs its whole pre-period to fit weights; a
 * segmented regression its trend), and the result says the share is then descriptive.
 *
 * Only the point estimate of each fake is kept (analytic inference inside each fake; the
 * weighted comparison keeps its own placebo inference, which it cannot switch off).
 *
 * Throws EngineError 'invalid_spec' when the treated units do not share one start, when the
 * treatment is given as a column, or when the pre-period is too short for a single fake
 * start; RobustnessCancelled when the caller cancels.
 */
import type { FakeStart, PlaceboTimeResult } from '../../../shared/engine/robustness'
import type { Spec } from '../../../shared/engine/spec'
import { parsePeriod } from '../../../shared/utils/periods'
import { EngineError, isEngineError } from '../errors'
import { estimate, parseSpec } from '../estimate'
import type { TypedRow } from '../panel'
import { type RobustnessHooks, refusal, step } from './hooks'

const SLACK = 1e-9

export interface PlaceboTimeOptions {
  /** Periods kept on each side of a fake start inside the pre-period (default 3). */
  minDistance?: number
  /** The run's effect, when the caller has it (else estimated here). */
  actual?: number
  /** Matched windows of h periods either side of every start (default: true for "did"). */
  matchWindows?: boolean
}

/** The spec for a point estimate only: analytic inference where the design allows it. */
export function pointSpec(spec: Spec): Spec {
  if (spec.design === 'synthetic') return spec
  return { ...spec, inference: { ...spec.inference, method: 'analytic', draws: 99 } }
}

function commonStart(spec: Spec): string | number {
  if (spec.treatmentColumn) throw new EngineError('invalid_spec', 'placeboInTime: the treatment is given as a column, so there is no single start date to move')
  const s = spec.start ?? spec.window?.post[0] ?? (spec.design === 'its' ? spec.its?.breaks?.[0] : undefined)
  if (s === undefined) throw new EngineError('invalid_spec', 'placeboInTime: the spec has no start date')
  if (typeof s === 'object') {
    const values = [...new Set(Object.values(s).map(String))]
    if (values.length !== 1) throw new EngineError('invalid_spec', `placeboInTime: the treated units start at ${values.length} different dates; a placebo in time needs one shared start (run it per adoption group)`)
    return values[0]
  }
  return s
}

/** Spec of one fake: same design, the fake start, no window, phases or later breaks. */
function fakeSpec(spec: Spec, start: string, window?: Spec['window']): Spec {
  return pointSpec({
    ...spec,
    start,
    window,
    did: { ...spec.did, phases: undefined },
    its: spec.its ? { ...spec.its, breaks: undefined } : undefined,
  })
}

export async function placeboInTime(rows: readonly TypedRow[], specInput: unknown, options: PlaceboTimeOptions = {}, hooks: RobustnessHooks = {}): Promise<PlaceboTimeResult> {
  const spec = parseSpec(specInput)
  const minDistance = options.minDistance ?? 3
  if (!Number.isInteger(minDistance) || minDistance < 1) throw new EngineError('invalid_spec', `placeboInTime: minDistance must be a whole number from 1 (got ${minDistance})`)
  const start = parsePeriod(commonStart(spec))
  const windowFrom = spec.window ? parsePeriod(spec.window.pre[0]).ordinal : -Infinity
  const ordinalOf = new Map<string, number>()
  for (const r of rows) {
    const key = String(r.period)
    if (!ordinalOf.has(key)) ordinalOf.set(key, parsePeriod(r.period).ordinal)
  }
  const inPre = (o: number) => o < start.ordinal && o >= windowFrom
  const pre = [...new Set([...ordinalOf].filter(([, o]) => inPre(o)).map(([, o]) => o))].sort((a, b) => a - b)
  const labelOf = new Map([...ordinalOf].map(([k, o]) => [o, parsePeriod(k).canonical]))
  // fake start at pre[i]: i periods before it and pre.length - i from it to the end of the pre-period
  const candidates = pre.filter((_, i) => i >= minDistance && pre.length - i >= minDistance)
  if (!candidates.length) {
    throw new EngineError('invalid_spec', `placeboInTime: the pre-period has ${pre.length} period${pre.length === 1 ? '' : 's'}; a fake start needs ${minDistance} on each side (${2 * minDistance} in all)`)
  }
  const preRows = rows.filter((r) => inPre(ordinalOf.get(String(r.period))!))
  const match = options.matchWindows ?? spec.design === 'did'
  const windowTo = spec.window ? parsePeriod(spec.window.post[1]).ordinal : Infinity
  const post = [...new Set([...ordinalOf.values()].filter(o => o >= start.ordinal && o <= windowTo))].sort((a, b) => a - b)
  const h = Math.min(minDistance, post.length)
  const label = (o: number) => labelOf.get(o)!
  // h periods before the start at index i of `axis` and h from it
  const around = (axis: number[], i: number): Spec['window'] => ({ pre: [label(axis[i - h]!), label(axis[i - 1]!)], post: [label(axis[i]!), label(axis[i + h - 1]!)] })
  const runEstimate = options.actual ?? estimate({ rows: [...rows] }, pointSpec(spec)).effect.estimate
  let actual = runEstimate
  if (match && h >= 1) {
    const full = [...pre, ...post]
    actual = estimate({ rows: [...rows] }, pointSpec({ ...spec, window: around(full, pre.length), did: { ...spec.did, phases: undefined } })).effect.estimate
  }
  const fakes: FakeStart[] = []
  for (let i = 0; i < candidates.length; i++) {
    const fake = labelOf.get(candidates[i])!
    await step(hooks, i / candidates.length, `Fake start ${fake} (${i + 1} of ${candidates.length})`)
    try {
      const window = match && h >= 1 ? around(pre, pre.indexOf(candidates[i]!)) : undefined
      fakes.push({ start: fake, estimate: estimate({ rows: preRows }, fakeSpec(spec, fake, window)).effect.estimate, note: null })
    } catch (e) {
      fakes.push({ start: fake, estimate: null, note: refusal(e, isEngineError) })
    }
  }
  await step(hooks, 1, 'Placebo in time done')
  const estimated = fakes.filter((f) => f.estimate !== null)
  const bar = Math.abs(actual) * (1 - SLACK)
  const atLeast = estimated.filter((f) => Math.abs(f.estimate!) >= bar).length
  const warnings: string[] = []
  const failed = fakes.length - estimated.length
  if (failed) warnings.push(`${failed} fake start${failed > 1 ? 's' : ''} could not be estimated and ${failed > 1 ? 'are' : 'is'} left out of the share`)
  if (!match) warnings.push('the actual effect covers the run\'s whole window while each fake covers a split of the pre-period: windows of different lengths, so read the share as descriptive, not as a test')
  if (estimated.length && estimated.length < 10) warnings.push(`only ${estimated.length} fake start${estimated.length > 1 ? 's' : ''}: the share is coarse (each one moves it by ${Math.round(100 / estimated.length)} points)`)
  return {
    kind: 'placebo_time',
    actual: { start: start.canonical, estimate: actual },
    runEstimate,
    window: match && h >= 1 ? h : null,
    minDistance,
    prePeriods: pre.length,
    fakes,
    n: estimated.length,
    atLeastAsLarge: atLeast,
    share: estimated.length ? atLeast / estimated.length : null,
    warnings,
  }
}
