/** The cross-site and JSON-only rules for API writes (server/utils/crossSite.ts); cases invented, answers by construction. */
import { describe, expect, it } from 'vitest'
import { crossSiteVerdict, type CrossSiteRequest } from '../../../server/utils/crossSite'

const own = 'http://127.0.0.1:3000'
const req = (r: Partial<CrossSiteRequest>): CrossSiteRequest => ({ method: 'POST', path: '/api/studies/1/comments', hasBody: true, contentType: 'application/json', ownOrigins: [own], ...r })

describe('crossSiteVerdict', () => {
  it('lets reads and our own JSON writes through', () => {
    expect(crossSiteVerdict(req({ method: 'GET', origin: 'https://elsewhere.example', contentType: 'text/plain' }))).toBeNull()
    expect(crossSiteVerdict(req({ origin: own, secFetchSite: 'same-origin' }))).toBeNull()
    expect(crossSiteVerdict(req({}))).toBeNull()
    expect(crossSiteVerdict(req({ contentType: 'application/json; charset=utf-8' }))).toBeNull()
    expect(crossSiteVerdict(req({ method: 'DELETE', hasBody: false, contentType: null }))).toBeNull()
  })

  it('refuses another origin or a cross-site / same-site fetch with 403', () => {
    expect(crossSiteVerdict(req({ origin: 'https://elsewhere.example' }))?.statusCode).toBe(403)
    expect(crossSiteVerdict(req({ origin: 'null' }))?.statusCode).toBe(403)
    expect(crossSiteVerdict(req({ origin: 'http://127.0.0.1:3001' }))?.statusCode).toBe(403)
    expect(crossSiteVerdict(req({ secFetchSite: 'cross-site' }))?.statusCode).toBe(403)
    expect(crossSiteVerdict(req({ secFetchSite: 'same-site' }))?.statusCode).toBe(403)
    expect(crossSiteVerdict(req({ path: '/api/auth/callback/credentials', contentType: 'application/x-www-form-urlencoded', origin: 'https://elsewhere.example' }))?.statusCode).toBe(403)
  })

  it('refuses form and text bodies on JSON routes with 415; uploads and sign-in keep theirs', () => {
    for (const type of ['application/x-www-form-urlencoded', 'text/plain', 'multipart/form-data; boundary=x', null]) {
      expect(crossSiteVerdict(req({ contentType: type }))?.statusCode).toBe(415)
    }
    expect(crossSiteVerdict(req({ path: '/api/sources/4/releases', contentType: 'multipart/form-data; boundary=x' }))).toBeNull()
    expect(crossSiteVerdict(req({ path: '/api/sources/4/releases/preview', contentType: 'multipart/form-data; boundary=x' }))).toBeNull()
    expect(crossSiteVerdict(req({ path: '/api/auth/callback/credentials', contentType: 'application/x-www-form-urlencoded', origin: own }))).toBeNull()
  })
})
