/**
 * Response headers and request limits (the nuxt-security module), set deliberately rather than
 * left at its defaults. What it does not own:
 * - sign-in throttling: ours (server/services/signInThrottle.ts, counters in PostgreSQL), so its
 *   in-memory rate limiter is off;
 * - cross-site requests: ours (server/utils/crossSite.ts checks Origin / Sec-Fetch-Site and
 *   JSON-only bodies), so its CSRF tokens are off;
 * - input checking: every route validates with zod (server/utils/validate.ts), so its XSS
 *   validator, which would refuse ordinary text such as "<5 years", is off.
 * - CORS: ours (server/middleware/05.cors.ts answers only the app's own origin, PUBLIC_ORIGIN,
 *   known at run time); the module's handler is off because it answers "*" to any request
 *   without an Origin header and takes its origin at build time.
 * The CSP uses a per-response nonce for scripts.
 */
export const JSON_BODY_LIMIT_BYTES = 1_000_000

export function securityOptions(uploadLimitBytes: number) {
  return {
    headers: {
      contentSecurityPolicy: {
        'default-src': ['\'self\''],
        'base-uri': ['\'none\''],
        // data: and blob: let the chart PNG export read back the image it drew (app/utils/chartPng.ts)
        'connect-src': ['\'self\'', 'data:', 'blob:'],
        'font-src': ['\'self\'', 'data:'],
        'form-action': ['\'self\''],
        'frame-ancestors': ['\'none\''],
        'img-src': ['\'self\'', 'data:', 'blob:'],
        'object-src': ['\'none\''],
        'script-src-attr': ['\'none\''],
        'style-src': ['\'self\'', '\'unsafe-inline\''],
        'script-src': ['\'self\'', '\'strict-dynamic\'', '\'nonce-{{nonce}}\''],
        // served on plain http on loopback by npm start; TLS, where used, is the proxy's job
        'upgrade-insecure-requests': false,
      },
      xFrameOptions: 'DENY' as const,
      xContentTypeOptions: 'nosniff' as const,
      referrerPolicy: 'same-origin' as const,
    },
    corsHandler: false as const,
    requestSizeLimiter: {
      maxRequestSizeInBytes: JSON_BODY_LIMIT_BYTES,
      // uploads are also capped while they stream in (server/utils/upload.ts)
      maxUploadFileRequestInBytes: uploadLimitBytes + 64 * 1024,
      throwError: true,
    },
    rateLimiter: false as const,
    xssValidator: false as const,
    csrf: false,
    hidePoweredBy: true,
    removeLoggers: false as const,
    nonce: true,
    sri: true,
  }
}
