/**
 * The Robustness step's pure helpers and the findings in words, on real engine results from
 * the invented panel of tests/engine/robustness/panel.ts (answers known by construction).
 */
import { describe, expect, it } from 'vitest'
import { doneByKind, forestScale, latestByKind, leaveOneOutRows, placeboTimeRows, type RobustnessCheck } from '~~/app/utils/robustness'
import { robustnessWords } from '#shared/utils/robustnessSummary'
import { leaveOneOut, placeboInTime } from '~~/server/engine/robustness'
import { rows, spec } from '../../engine/robustness/panel'

const check = (id: number, kind: RobustnessCheck['kind'], status: RobustnessCheck['status'], result: RobustnessCheck['result'] = null) =>
  ({ id, kind, status, result, studyId: 1, runId: 1, spec: {}, fingerprint: null, progress: 0, message: null, jobId: null, createdAt: '', updatedAt: '', createdBy: null }) as RobustnessCheck

describe('robustness helpers', () => {
  it('takes the newest check of each kind and the newest finished result', async () => {
    const time = await placeboInTime(rows, spec)
    const list = [check(5, 'placebo_time', 'running'), check(4, 'pools', 'failed'), check(3, 'placebo_time', 'done', time)]
    expect(latestByKind(list).map(c => c.id)).toEqual([5, 4])
    expect(doneByKind(list).placebo_time?.id).toBe(3)
    expect(doneByKind(list).pools).toBeUndefined()
  })

  it('scales every value (and zero unless told not to) onto 0..100 with padding', () => {
    const s = forestScale([{ label: 'a', estimate: 2, low: 1, high: 4 }])
    expect(s.at(0)).toBeCloseTo(6 / 112 * 100, 10) // range 0..4 padded by 0.24 each side
    expect(s.at(4)).toBeCloseTo(100 - 6 / 112 * 100, 10)
    const t = forestScale([{ label: 'a', estimate: 2 }, { label: 'b', estimate: 3 }], [], false)
    expect(t.lo).toBeCloseTo(1.94, 10)
    expect(t.hi).toBeCloseTo(3.06, 10)
  })

  it('orders the chart rows: fakes then the actual start; donors by how far they move the estimate', async () => {
    const time = placeboTimeRows(await placeboInTime(rows, spec))
    expect(time.map(r => r.label)).toEqual(['2004', '2005', '2008 (actual)'])
    expect(time.at(-1)!.strong).toBe(true)
    const loo = leaveOneOutRows(await leaveOneOut({ rows }, spec))
    expect(loo[0]!.label).toBe('without C')
  })

  it('says the findings in words, with a caution when the check weakens the estimate', async () => {
    const quiet = robustnessWords(await placeboInTime(rows, spec))
    expect(quiet.finding).toBe('2 fake start dates in the pre-period (at least 3 periods from either end): 0 of them (0%) give an effect at least as large as the actual 3.33 (every effect, the actual one included, over 3 periods either side of its start).')
    expect(quiet.caution).toBeNull()
    const loud = robustnessWords(await placeboInTime(rows, spec, { minDistance: 2, actual: 0.7, matchWindows: false }))
    expect(loud.caution).toMatch(/effects as large as the actual one/)
    const loo = robustnessWords(await leaveOneOut({ rows }, spec))
    expect(loo.finding).toBe('Leaving out one comparison jurisdiction at a time, the estimate ranges from 3.57 to 4.57 (all of them: 3.9); it moves most without C, B, D.')
  })
})
