/**
 * CORS for the app's own origin only (PUBLIC_ORIGIN or the address the request was sent to):
 * a request from there gets Access-Control-Allow-Origin naming it, and its preflight is answered;
 * any other origin gets no CORS headers, so browsers keep other sites from reading our answers
 * (and server/middleware/10.crossSite.ts refuses their state-changing calls).
 */
export default defineEventHandler((event) => {
  const origin = event.node.req.headers.origin
  if (!origin || !event.path.startsWith('/api/')) return
  const own = new Set([publicOrigin(), getRequestURL(event).origin])
  if (!own.has(origin)) return
  setResponseHeaders(event, { 'Access-Control-Allow-Origin': origin, 'Vary': 'Origin' })
  if (event.method === 'OPTIONS' && event.node.req.headers['access-control-request-method']) {
    setResponseHeaders(event, {
      'Access-Control-Allow-Methods': 'GET,HEAD,POST,PUT,PATCH,DELETE',
      'Access-Control-Allow-Headers': 'content-type',
      'Access-Control-Max-Age': '600',
    })
    setResponseStatus(event, 204)
    return ''
  }
})
