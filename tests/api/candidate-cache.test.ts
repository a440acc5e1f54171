/**
 * The study's kept candidate context (server/services/studies/candidates.ts) against changes
 * of the registry: an edit of a candidate jurisdiction shows at once, a new jurisdiction with no
 * data changes nothing, and a release of the study's measure brings its rows in at once.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { as, type Client } from '../support/http'
import { closePool } from '../support/db'
import { importedRelease, monthlyPanelStudy, MONTHS_2020_2021 as months, runTag } from '../support/uploads'

let admin: Client
let analyst: Client
let sourceId: number
let studyId: number
const tag = runTag()
const T = `K${tag}-T`
const donors = [1, 2, 3].map(n => `K${tag}-C${n}`)
const key = `visits_${tag.toLowerCase()}`
const mapping = { layout: 'long', jurisdiction: 'code', period: 'month', values: { value: key } }
const csv = (codes: string[]) => `code,month,value\n${codes.flatMap((c, u) => months.map((m, i) => `${c},${m},${40 + 2 * u + 0.3 * i + ((i * 5 + u) % 3)}`)).join('\n')}\n`

const release = (codes: string[], label: string) => importedRelease(analyst, sourceId, csv(codes), label, mapping)
const candidates = async () => {
  const res = await analyst.get(`/api/studies/${studyId}/candidates`)
  expect(res.status, JSON.stringify(res.body)).toBe(200)
  return res.body.rows as { jurisdiction: string, name: string }[]
}

beforeAll(async () => {
  ;[admin, analyst] = await Promise.all([as('admin'), as('analyst')])
  ;({ sourceId, studyId } = await monthlyPanelStudy(admin, analyst, { treated: T, donors, key, label: 'Visits', sourceName: `Visits office ${tag}`, file: csv([T, ...donors]), mapping }))
})
afterAll(closePool)

describe('kept candidate context', () => {
  it('shows an edited name at once, ignores a new jurisdiction without data, and takes in a new release', async () => {
    expect((await candidates()).map(r => r.jurisdiction).sort()).toEqual([...donors].sort())

    const renamed = await admin.patch(`/api/jurisdictions/${donors[0]}`, { name: `Renamed ${tag}` })
    expect(renamed.status, JSON.stringify(renamed.body)).toBe(200)
    expect((await candidates()).find(r => r.jurisdiction === donors[0])!.name).toBe(`Renamed ${tag}`)

    const extra = `K${tag}-C4`
    expect((await admin.post('/api/jurisdictions', { code: extra, name: `Town ${extra}`, kind: 'municipality', region: 'Test' })).status).toBe(201)
    expect((await candidates()).map(r => r.jurisdiction).sort()).toEqual([...donors].sort())

    await release([extra], 'extra town')
    expect((await candidates()).map(r => r.jurisdiction).sort()).toEqual([...donors, extra].sort())
  })
})
