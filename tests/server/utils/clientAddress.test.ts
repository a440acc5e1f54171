/** Which address the sign-in throttle counts (server/utils/clientAddress.ts); cases invented, answers by construction. */
import { describe, expect, it } from 'vitest'
import { parseTrustedProxy, resolveClientAddress } from '../../../server/utils/clientAddress'

describe('resolveClientAddress', () => {
  it('ignores X-Forwarded-For unless a proxy is trusted', () => {
    for (const setting of [undefined, '', '0', 'false']) {
      expect(resolveClientAddress('::ffff:127.0.0.1', '203.0.113.7', parseTrustedProxy(setting))).toBe('127.0.0.1')
    }
  })

  it('with one trusted proxy, takes the entry that proxy appended (the last), not what the client wrote', () => {
    expect(resolveClientAddress('10.0.0.5', 'forged-by-client, 198.51.100.4', parseTrustedProxy('1'))).toBe('198.51.100.4')
    expect(resolveClientAddress('10.0.0.5', undefined, parseTrustedProxy('true'))).toBe('10.0.0.5')
  })

  it('with a list, trusts only listed peers and walks past listed hops from the right', () => {
    const trust = parseTrustedProxy('10.0.0.5, 10.0.0.6')
    expect(resolveClientAddress('10.0.0.5', '1.2.3.4, 198.51.100.4, 10.0.0.6', trust)).toBe('198.51.100.4')
    expect(resolveClientAddress('192.0.2.9', '198.51.100.4', trust)).toBe('192.0.2.9')
  })
})
