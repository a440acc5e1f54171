/** The validation's result: observations only when there is no problem, and the summary the page shows. Pure. */
import type { UploadProblem } from '../../../../shared/schemas/uploads'
import { emptyObservations, type NewMeasure, type Observations, type Validation } from './types'

export function finish(
  problems: UploadProblem[],
  problemCount: number,
  warnings: string[],
  observations: Observations,
  newMeasures: NewMeasure[],
  rows: number,
  blanks: number,
  jurisdictions = 0,
): Validation {
  const counts: Record<string, number> = {}
  let first: string | null = null
  let last: string | null = null
  for (let i = 0; i < observations.length; i++) {
    const key = observations.measureKeys[observations.measureIndex[i]!]!
    counts[key] = (counts[key] ?? 0) + 1
    const p = observations.periods[i]!
    if (first === null || p < first) first = p
    if (last === null || p > last) last = p
  }
  const ok = problemCount === 0
  return {
    ok,
    problems,
    problemCount,
    warnings,
    observations: ok ? observations : emptyObservations(),
    newMeasures: ok ? newMeasures : [],
    summary: { rows, observations: ok ? observations.length : 0, blanks, jurisdictions, measures: ok ? counts : {}, firstPeriod: ok ? first : null, lastPeriod: ok ? last : null },
  }
}
