/**
 * Cross-site request rules for state-changing calls (POST, PUT, PATCH, DELETE) under /api/
 * (pure: server/middleware/10.crossSite.ts applies it, the tests call it directly):
 * - refused (403) when the browser says the request comes from another site (Sec-Fetch-Site
 *   cross-site or same-site) or when an Origin header names any origin but the app's own;
 * - JSON routes take JSON only: a body sent as a form (url-encoded, multipart) or plain text is
 *   refused with 415. Those are the bodies a page on another site can send without asking first.
 *   Uploads (UPLOAD_PATHS) take multipart/form-data; sign-in (/api/auth/) keeps next-auth's
 *   form posts, which carry its own CSRF token.
 */
export const STATE_CHANGING = new Set(['POST', 'PUT', 'PATCH', 'DELETE'])

/** Routes that read a multipart upload (server/utils/upload.ts). Add a new upload route here. */
export const UPLOAD_PATHS: RegExp[] = [/^\/api\/sources\/[^/]+\/releases(?:\/preview)?$/]

export interface CrossSiteRequest {
  method: string
  path: string
  origin?: string | null
  secFetchSite?: string | null
  contentType?: string | null
  hasBody: boolean
  ownOrigins: string[]
}

export type CrossSiteVerdict = null | { statusCode: 403 | 415, message: string }

const originOf = (value: string): string | null => {
  try {
    return new URL(value).origin
  }
  catch {
    return null
  }
}

export function crossSiteVerdict(r: CrossSiteRequest): CrossSiteVerdict {
  const path = r.path.split('?')[0]!
  if (!STATE_CHANGING.has(r.method.toUpperCase()) || !path.startsWith('/api/')) return null
  const site = r.secFetchSite?.toLowerCase()
  if (site && site !== 'same-origin' && site !== 'none') {
    return { statusCode: 403, message: 'Refused: this request was sent from another site. Use Counterpart\'s own pages.' }
  }
  if (r.origin != null) {
    const own = new Set(r.ownOrigins.map(originOf).filter(Boolean))
    const origin = originOf(r.origin)
    if (!origin || !own.has(origin)) {
      return { statusCode: 403, message: `Refused: this request came from ${r.origin}, not from Counterpart's own address.` }
    }
  }
  if (path.startsWith('/api/auth/') || !r.hasBody) return null
  const type = (r.contentType ?? '').split(';')[0]!.trim().toLowerCase()
  if (type === 'application/json' || /^application\/[\w.+-]+\+json$/.test(type)) return null
  if (type === 'multipart/form-data' && UPLOAD_PATHS.some(p => p.test(path))) return null
  return {
    statusCode: 415,
    message: `This route takes JSON: send the body with Content-Type: application/json${type ? ` (got ${type})` : ''}.`,
  }
}
