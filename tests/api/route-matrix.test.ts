/**
 * Every route under server/api, found by walking the folder (so new routes are covered
 * automatically): without a session each refuses with 401, and where the file declares a role
 * rule (requireUser(event, ADMIN) or WRITERS, or requireStudy(event, id, 'write' | 'version')), the roles outside it get 403.
 * Public routes are listed here by name, with the reason.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs'
import { join, relative } from 'node:path'
import { describe, expect, it } from 'vitest'
import { anonymous, as, type Client } from '../support/http'

const API_DIR = join(__dirname, '../../server/api')
const PUBLIC: Record<string, string> = {
  'auth/[...].ts': 'sign-in itself',
  'invitations/[token]/index.get.ts': 'the invitee has no account yet',
  'invitations/[token]/accept.post.ts': 'the invitee sets their password here',
}
const SAMPLE_PARAM: Record<string, string> = { id: '999999', token: 'x'.repeat(32), code: 'NO-SUCH-CODE', runId: '999999' }

interface Route { file: string, method: string, path: string, rule: 'admin' | 'writers' | 'any' }

function walk(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const full = join(dir, name)
    return statSync(full).isDirectory() ? walk(full) : name.endsWith('.ts') ? [full] : []
  })
}

function toRoute(full: string): Route {
  const file = relative(API_DIR, full).split('\\').join('/')
  const match = file.match(/^(.*?)(?:\.(get|post|put|patch|delete))?\.ts$/)!
  const method = (match[2] ?? 'get').toUpperCase()
  const segments = match[1]!.split('/').filter(s => s !== 'index')
  const path = '/api/' + segments.map(s => s.replace(/^\[(\w+)\]$/, (_, p: string) => SAMPLE_PARAM[p] ?? 'sample')).join('/')
  const source = readFileSync(full, 'utf8')
  const rule = /requireUser\(event, ADMIN\)/.test(source)
    ? 'admin'
    : /requireUser\(event, WRITERS\)|requireStudy\(event, [^)]*'(?:write|version)'\)/.test(source) ? 'writers' : 'any'
  return { file, method, path, rule }
}

const routes = walk(API_DIR).map(toRoute)
const guarded = routes.filter(r => !(r.file in PUBLIC))

async function send(client: Client, r: Route) {
  return r.method === 'GET' || r.method === 'DELETE' ? client.request(r.method, r.path) : client.request(r.method, r.path, {})
}

describe('route-by-role matrix', () => {
  it('finds the routes', () => {
    expect(routes.length).toBeGreaterThan(5)
    for (const file of Object.keys(PUBLIC)) expect(routes.map(r => r.file)).toContain(file)
  })

  it.each(guarded.map(r => [`${r.method} ${r.path} (${r.file})`, r] as const))('%s refuses without a session', async (_, r) => {
    const res = await send(anonymous(), r)
    expect(res.status, `${r.method} ${r.path}`).toBe(401)
  })

  const restricted = guarded.filter(r => r.rule !== 'any')
  it.each(restricted.map(r => [`${r.method} ${r.path} [${r.rule}]`, r] as const))('%s refuses the roles outside its rule', async (_, r) => {
    const outsiders = r.rule === 'admin' ? ['analyst', 'reviewer'] as const : ['reviewer'] as const
    for (const role of outsiders) {
      const res = await send(await as(role), r)
      expect(res.status, `${role}: ${r.method} ${r.path}`).toBe(403)
    }
  })

  it('every guarded route calls requireUser', () => {
    for (const r of guarded) {
      expect(readFileSync(join(API_DIR, r.file), 'utf8'), r.file).toMatch(/require\w+\(event/)
    }
  })
})
