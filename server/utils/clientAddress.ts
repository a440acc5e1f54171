/**
 * The address a request came from, for sign-in throttling and the audit trail. By default it is
 * the socket's peer: X-Forwarded-For is written by the client and proves nothing. Behind a
 * reverse proxy, set COUNTERPART_TRUSTED_PROXY:
 *   1 (or true)               the peer is one trusted proxy: use the last X-Forwarded-For entry
 *                             (the one that proxy appended);
 *   10.0.0.5,10.0.0.6 (list)  trust only these peers: walk X-Forwarded-For from the right past
 *                             the trusted addresses and use the first one that is not.
 * Anything else (unset, 0, false) ignores X-Forwarded-For.
 */
import type { H3Event } from 'h3'

export type TrustedProxy = { kind: 'none' } | { kind: 'one' } | { kind: 'list', addresses: Set<string> }

export function normaliseAddress(address: string): string {
  const a = address.trim().replace(/^\[|\]$/g, '')
  return a.startsWith('::ffff:') && a.includes('.') ? a.slice(7) : a
}

export function parseTrustedProxy(setting: string | undefined): TrustedProxy {
  const s = (setting ?? '').trim().toLowerCase()
  if (!s || s === '0' || s === 'false' || s === 'no') return { kind: 'none' }
  if (s === '1' || s === 'true' || s === 'yes') return { kind: 'one' }
  return { kind: 'list', addresses: new Set(s.split(',').map(normaliseAddress).filter(Boolean)) }
}

export function resolveClientAddress(peer: string | undefined, forwardedFor: string | undefined, trust: TrustedProxy): string {
  const socket = peer ? normaliseAddress(peer) : 'unknown'
  if (trust.kind === 'none' || !forwardedFor) return socket
  const hops = forwardedFor.split(',').map(normaliseAddress).filter(Boolean)
  if (!hops.length) return socket
  if (trust.kind === 'one') return hops[hops.length - 1]!
  if (!trust.addresses.has(socket)) return socket
  for (let i = hops.length - 1; i >= 0; i--) {
    if (!trust.addresses.has(hops[i]!)) return hops[i]!
  }
  return hops[0]!
}

export function clientAddress(event: H3Event): string {
  const forwarded = event.node.req.headers['x-forwarded-for']
  return resolveClientAddress(
    event.node.req.socket?.remoteAddress,
    Array.isArray(forwarded) ? forwarded.join(',') : forwarded,
    parseTrustedProxy(process.env.COUNTERPART_TRUSTED_PROXY),
  )
}
