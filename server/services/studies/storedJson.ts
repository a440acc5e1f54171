/**
 * A value as PostgreSQL's jsonb gives it back after storing it: the same JSON, with every
 * object's keys in jsonb's order (shorter keys first, then byte order), members that are
 * undefined dropped, array holes and non-finite numbers as null, dates as ISO strings. A reply
 * built from what was just stored then reads exactly like any later read of it, without reading
 * it back. Pure.
 */
const ASCII = /^[\x00-\x7F]*$/

/** Keys in jsonb's order; the usual all-ASCII keys compare as strings (their bytes are their characters). */
function jsonbOrder(keys: string[]): string[] {
  if (keys.length < 2) return keys
  if (keys.every(k => ASCII.test(k))) return keys.sort((a, b) => (a.length !== b.length ? a.length - b.length : a < b ? -1 : a > b ? 1 : 0))
  const bytes = new Map(keys.map(k => [k, Buffer.from(k)]))
  return keys.sort((a, b) => {
    const x = bytes.get(a)!
    const y = bytes.get(b)!
    return x.length !== y.length ? x.length - y.length : Buffer.compare(x, y)
  })
}

export function asStoredJson<T>(value: T): T {
  return stored(value) as T
}

function stored(v: unknown): unknown {
  if (v === null || v === undefined) return null
  if (typeof v === 'number') return Number.isFinite(v) ? v : null
  if (typeof v !== 'object') return typeof v === 'function' || typeof v === 'symbol' ? null : v
  if (v instanceof Date) return v.toISOString()
  if (Array.isArray(v)) {
    const out: unknown[] = new Array(v.length)
    for (let i = 0; i < v.length; i++) out[i] = stored(v[i])
    return out
  }
  const obj = v as Record<string, unknown>
  const keys = jsonbOrder(Object.keys(obj).filter(k => obj[k] !== undefined && typeof obj[k] !== 'function' && typeof obj[k] !== 'symbol'))
  const out: Record<string, unknown> = {}
  for (const k of keys) out[k] = stored(obj[k])
  return out
}
