/**
 * Refuses cross-site and non-JSON state-changing API calls (rules in server/utils/crossSite.ts),
 * and JSON bodies over the limit for PATCH too (the header module's size limit covers POST, PUT
 * and DELETE only).
 */
import { JSON_BODY_LIMIT_BYTES } from '~~/config/security'

export default defineEventHandler((event) => {
  if (!STATE_CHANGING.has(event.method)) return
  const headers = event.node.req.headers
  const length = headers['content-length']
  const verdict = crossSiteVerdict({
    method: event.method,
    path: event.path,
    origin: headers.origin ?? null,
    secFetchSite: (headers['sec-fetch-site'] as string | undefined) ?? null,
    contentType: headers['content-type'] ?? null,
    hasBody: (length !== undefined && length !== '0') || headers['transfer-encoding'] !== undefined,
    ownOrigins: [publicOrigin(), getRequestURL(event).origin, process.env.AUTH_ORIGIN ?? ''].filter(Boolean),
  })
  if (verdict) throw createError({ statusCode: verdict.statusCode, message: verdict.message })
  if (Number(length) > JSON_BODY_LIMIT_BYTES && !UPLOAD_PATHS.some(p => p.test(event.path.split('?')[0]!))) {
    throw createError({ statusCode: 413, statusMessage: 'Payload Too Large', message: `The request body is over ${JSON_BODY_LIMIT_BYTES.toLocaleString('en')} bytes; send less at a time.` })
  }
})
