/**
 * Run fingerprints against data releases, on a small panel uploaded through the API: a new
 * release that republishes the same values leaves the fingerprint as it was (the release ids
 * change, the rows do not); a release that changes one value the run reads changes it, and
 * the rerun says what moved. An older run still reads back exactly from its own releases.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { as, type Client } from '../support/http'
import { closePool } from '../support/db'
import { importedRelease, monthlyPanelStudy, MONTHS_2020_2021 as months, runTag } from '../support/uploads'
import { readRowsBack } from '../support/studies'
import { fingerprintRows } from '../../server/services/studies/fingerprint'

let admin: Client
let analyst: Client
let sourceId: number
let studyId: number
let republishedId: number
const tag = runTag()
const T = `F${tag}-T`
const donors = [1, 2, 3, 4].map(n => `F${tag}-C${n}`)
const key = `claims_${tag.toLowerCase()}`
const mapping = { layout: 'long', jurisdiction: 'code', period: 'month', values: { value: key } }

function value(code: string, i: number) {
  const u = [T, ...donors].indexOf(code)
  return 50 + 3 * u + 0.2 * i + ((i * 7 + u * 3) % 5) * 0.3 - (code === T && i >= 12 ? 4 : 0)
}
function csv(rows: [string, string, number][]) {
  return `code,month,value\n${rows.map(r => r.join(',')).join('\n')}\n`
}
const allRows = () => [T, ...donors].flatMap(code => months.map((m, i) => [code, m, value(code, i)] as [string, string, number]))

const release = (text: string, label: string) => importedRelease(analyst, sourceId, text, label, mapping)

async function run() {
  const res = await analyst.post(`/api/studies/${studyId}/runs`, { design: 'did' })
  expect(res.status, JSON.stringify(res.body)).toBe(201)
  return res.body
}

beforeAll(async () => {
  ;[admin, analyst] = await Promise.all([as('admin'), as('analyst')])
  ;({ sourceId, studyId } = await monthlyPanelStudy(admin, analyst, { treated: T, donors, key, label: 'Claims', sourceName: `Claims office ${tag}`, file: csv(allRows()), mapping }))
})
afterAll(closePool)

describe('fingerprints and releases', () => {
  it('stays the same when a release republishes the same values, changes when a value changes', async () => {
    const first = await run()
    expect([...first.spec.comparison].sort()).toEqual([...donors].sort())
    expect(first.result.effect.estimate).toBeCloseTo(-4, 0)

    // the same values again, in another order: a new release (newest for every cell), same rows
    const second = await release(csv([...allRows()].reverse()), 'republished')
    republishedId = second
    const same = await run()
    expect(same.releaseIds).toEqual([second])
    expect(same.fingerprint).toBe(first.fingerprint)
    expect(same.compare).toMatchObject({ previousId: first.id, dataChanged: false, estimateDelta: 0, releasesAdded: [second] })

    // one revised value of one donor
    const third = await release(csv([[donors[1]!, '2021-06', value(donors[1]!, 17) + 2.5]]), 'revision')
    const changed = await run()
    expect(changed.releaseIds).toEqual([second, third])
    expect(changed.fingerprint).not.toBe(first.fingerprint)
    expect(changed.compare).toMatchObject({ previousId: same.id, dataChanged: true, releasesAdded: [third] })
    expect(changed.compare.estimateDelta).not.toBe(0)

    // each run still reads back exactly from its own releases
    for (const r of [first, same, changed]) expect(fingerprintRows(await readRowsBack(r.id), r.spec)).toBe(r.fingerprint)
    const listed = (await analyst.get(`/api/studies/${studyId}/runs`)).body as { id: number, compare: { dataChanged: boolean } | null }[]
    expect(listed.map(r => r.compare?.dataChanged ?? null)).toEqual([true, false, null])
  })

  it('names only the releases of its own units: without the revised donor, the revision is not among them', async () => {
    // the run takes its units' rows from the study's current rows of every unit; its releases
    // must still be those of its own cells, as a read of just those units would find
    const put = await analyst.put(`/api/studies/${studyId}/pool`, { decisions: [{ jurisdiction: donors[1]!, included: false, reason: 'Test: leave the revised donor out' }] })
    expect(put.status, JSON.stringify(put.body)).toBe(200)
    const without = await run()
    expect(without.spec.comparison).not.toContain(donors[1])
    expect(without.releaseIds).toEqual([republishedId])
    expect(fingerprintRows(await readRowsBack(without.id), without.spec)).toBe(without.fingerprint)
  })
})
