/** Comparing a run with the previous run of the same design. Pure. */
import type { EstimateResult } from '#shared/engine/result'
import { canonicalJson } from './fingerprint'

export interface ComparedRun {
  id: number
  fingerprint: string
  releaseIds: number[]
  result: unknown
}

/**
 * What moved since the previous run of the same design: the estimate and SE (differences below
 * display precision, 1e-9 of the estimate's size, read as 0), and what differs: the data (other
 * rows under the same spec; new or dropped releases when the spec changed too), the pool, or the
 * options (spec keys).
 */
export function compareRuns(run: ComparedRun & { spec?: unknown }, previous: (ComparedRun & { spec?: unknown }) | undefined) {
  if (!previous) return null
  const a = (run.result as EstimateResult).effect
  const b = (previous.result as EstimateResult).effect
  const tiny = (d: number, scale: number) => (Math.abs(d) <= 1e-9 * (1 + Math.abs(scale)) ? 0 : d)
  const specA = (run.spec ?? {}) as Record<string, unknown>
  const specB = (previous.spec ?? {}) as Record<string, unknown>
  // by content, whatever the order of object keys (jsonb reorders them)
  const same = (x: unknown, y: unknown) => canonicalJson(x) === canonicalJson(y)
  const poolChanged = !same(specA.comparison, specB.comparison)
  const optionsChanged = [...new Set([...Object.keys(specA), ...Object.keys(specB)])].filter(k => k !== 'comparison' && !same(specA[k], specB[k])).sort()
  const releasesAdded = run.releaseIds.filter(id => !previous.releaseIds.includes(id))
  const releasesDropped = previous.releaseIds.filter(id => !run.releaseIds.includes(id))
  // under the same spec the fingerprint says it (a release that republishes the same values is
  // no change); when the spec changed too, only other releases show that the data moved
  const sameSpec = !poolChanged && optionsChanged.length === 0
  const dataChanged = sameSpec ? run.fingerprint !== previous.fingerprint : releasesAdded.length > 0 || releasesDropped.length > 0
  return {
    previousId: previous.id,
    estimateDelta: tiny(a.estimate - b.estimate, a.estimate),
    seDelta: a.se !== null && b.se !== null ? tiny(a.se - b.se, a.se) : null,
    dataChanged,
    poolChanged,
    optionsChanged,
    releasesAdded,
    releasesDropped,
  }
}

