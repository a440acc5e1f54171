/**
 * The series every threat check reads: the study's periods in time order, how many come before
 * the start, the treated series (mean of the treated units) and the pool's mean, all aligned on
 * the periods (NaN where a value is missing). Periods [0, nPre) are the pre-period, [nPre, T)
 * the post-period.
 */
import { EngineError } from '../errors'

export interface StudySeries {
  periods: string[]
  nPre: number
  treated: ArrayLike<number>
  pool: ArrayLike<number>
}

/** Throws EngineError 'invalid_input' when the series do not line up or a side is empty. */
export function checkStudySeries(s: StudySeries, where: string): void {
  const T = s.periods.length
  if (s.treated.length !== T || s.pool.length !== T) throw new EngineError('invalid_input', `${where}: the treated and pool series must have one value per period (${T})`)
  if (!(s.nPre >= 1 && s.nPre < T)) throw new EngineError('invalid_input', `${where}: the start must leave periods before and after it (${s.nPre} of ${T} periods before it)`)
}
