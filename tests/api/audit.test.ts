/** The audit log viewer's route: admins only, newest first, filters by entity, user, action and date, paging. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { as, type Client, DEMO } from '../support/http'
import { closePool } from '../support/db'
import { runTag } from '../support/uploads'

let admin: Client
const tag = runTag()
const codes = [`AU${tag}-1`, `AU${tag}-2`, `AU${tag}-3`]

beforeAll(async () => {
  admin = await as('admin')
  for (const code of codes) expect((await admin.post('/api/jurisdictions', { code, name: `Audit town ${code}`, kind: 'town' })).status).toBe(201)
})
afterAll(closePool)

describe('GET /api/audit', () => {
  it('is for admins only', async () => {
    expect((await (await as('analyst')).get('/api/audit')).status).toBe(403)
    expect((await (await as('reviewer')).get('/api/audit')).status).toBe(403)
  })

  it('filters by entity and id, with who, what, when, before and after', async () => {
    const res = await admin.get(`/api/audit?entity=jurisdiction&entityId=${codes[1]}`)
    expect(res.status).toBe(200)
    expect(res.body.rows).toHaveLength(1)
    expect(res.body.rows[0]).toMatchObject({ entity: 'jurisdiction', entityId: codes[1], userEmail: DEMO.admin, action: expect.any(String), at: expect.any(String) })
    expect(res.body.rows[0].after).toMatchObject({ code: codes[1] })
    expect(res.body.entities).toContain('jurisdiction')
  })

  it('filters by user, action and date, and pages newest first', async () => {
    const mine = await admin.get(`/api/audit?user=${encodeURIComponent('admin@')}&entity=jurisdiction&limit=2`)
    expect(mine.body.rows).toHaveLength(2)
    expect(mine.body.rows.every((r: { userEmail: string }) => r.userEmail === DEMO.admin)).toBe(true)
    expect(mine.body.rows[0].id).toBeGreaterThan(mine.body.rows[1].id)
    expect(mine.body.next).toBe(mine.body.rows[1].id)
    const next = await admin.get(`/api/audit?user=admin@&entity=jurisdiction&limit=2&before=${mine.body.next}`)
    expect(next.body.rows[0].id).toBeLessThan(mine.body.rows[1].id)
    const today = new Date().toISOString().slice(0, 10)
    const dated = await admin.get(`/api/audit?entity=jurisdiction&entityId=${codes[0]}&from=${today}&to=${today}`)
    expect(dated.body.rows).toHaveLength(1)
    const past = await admin.get(`/api/audit?entity=jurisdiction&entityId=${codes[0]}&to=2000-01-01`)
    expect(past.body.rows).toHaveLength(0)
    const none = await admin.get(`/api/audit?action=no-such-action-${tag}`)
    expect(none.body.rows).toHaveLength(0)
  })

  it('rejects bad filters with field issues', async () => {
    const res = await admin.get('/api/audit?from=yesterday&limit=9999')
    expect(res.status).toBe(400)
    expect(res.body.data.issues.map((i: { path: string }) => i.path)).toEqual(expect.arrayContaining(['from', 'limit']))
  })
})
