/** What the Estimates step says changed between two runs of a design (invented runs). */
import { describe, expect, it } from 'vitest'
import { compareRuns } from '../../../../server/services/studies/compareRuns'

const run = (id: number, estimate: number, spec: Record<string, unknown>, fingerprint: string, releaseIds = [1]) =>
  ({ id, fingerprint, releaseIds, spec, result: { effect: { estimate, se: 0.1 } } })

describe('compareRuns', () => {
  const base = { design: 'did', comparison: ['A', 'B'], did: { form: 'twfe' } }
  it('an option alone changed: not the data, and a difference below display precision reads as no change', () => {
    const c = compareRuns(run(2, -1.0000000000000002, { ...base, did: { form: '2x2' } }, 'f2'), run(1, -1, base, 'f1'))!
    expect(c).toMatchObject({ previousId: 1, dataChanged: false, poolChanged: false, optionsChanged: ['did'], estimateDelta: 0 })
  })
  it('the pool changed', () => {
    expect(compareRuns(run(2, -0.9, { ...base, comparison: ['A'] }, 'f2'), run(1, -1, base, 'f1'))).toMatchObject({ poolChanged: true, dataChanged: false, optionsChanged: [] })
  })
  it('other rows under the same spec are a data change; a release that republishes the same values is not', () => {
    expect(compareRuns(run(2, -1, base, 'f2', [1, 2]), run(1, -1, base, 'f1', [1]))).toMatchObject({ dataChanged: true, releasesAdded: [2] })
    expect(compareRuns(run(2, -1, base, 'f1', [2]), run(1, -1, base, 'f1', [1]))).toMatchObject({ dataChanged: false, releasesAdded: [2] })
    expect(compareRuns(run(2, -1, base, 'f2'), run(1, -1, base, 'f1'))).toMatchObject({ dataChanged: true, releasesAdded: [] })
    expect(compareRuns(run(2, -1, { ...base, comparison: ['A'] }, 'f2', [1, 2]), run(1, -1, base, 'f1', [1]))).toMatchObject({ dataChanged: true, poolChanged: true })
  })
})
