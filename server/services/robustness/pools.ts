/**
 * The named pools the alternative-pools check compares, from the study's Pool step as it
 * stands: the run's own pool, the suggested pool, the weighted comparison (the synthetic
 * design over every unflagged candidate, as the Pool step fits its weights) and the unflagged
 * candidates of the treated jurisdictions' region. A pool with no unit is kept with its
 * reason, so the reader sees why it has no estimate.
 */
import type { NamedPool } from '#shared/engine/robustness'
import { assemblePool, candidateContext, poolDecisions } from '../studies/candidates'
import type { Study } from '~~/db/schema'

export async function namedPools(study: Study, runComparison: string[]): Promise<NamedPool[]> {
  const [ctx, decisions] = await Promise.all([candidateContext(study), poolDecisions(study.id)])
  const { rows, summary } = assemblePool(ctx, decisions)
  const unflagged = rows.filter(r => !r.flagged).map(r => r.jurisdiction)
  const weighted = rows.filter(r => (r.weight ?? 0) > 0).map(r => r.jurisdiction)
  const regions = [...new Set(study.treated.map(t => ctx.info.get(t)?.region).filter((r): r is string => !!r))]
  const sameRegion = rows.filter(r => !r.flagged && r.region !== null && regions.includes(r.region)).map(r => r.jurisdiction)
  const pools: NamedPool[] = [
    { name: 'run', label: 'The run\'s pool', units: runComparison, note: 'The comparison jurisdictions the checked run used.' },
    { name: 'suggested', label: 'Suggested pool', units: summary.suggested, note: summary.suggestion.note ?? 'The Pool step\'s suggestion: close pre-period trend, then best fit.' },
  ]
  if (study.treated.length === 1) {
    pools.push({
      name: 'weighted',
      label: 'Weighted comparison',
      units: unflagged,
      design: 'synthetic',
      note: weighted.length ? `Weights fitted on the pre-period over every unflagged candidate; ${weighted.length} carry weight.` : 'Weights fitted on the pre-period over every unflagged candidate.',
    })
  }
  pools.push({
    name: 'same_region',
    label: regions.length ? `Same region (${regions.join(', ')})` : 'Same region',
    units: sameRegion,
    note: regions.length ? 'Unflagged candidates in the treated jurisdiction\'s region.' : 'The treated jurisdictions have no region recorded.',
  })
  return pools
}
