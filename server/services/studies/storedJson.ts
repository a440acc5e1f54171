/**
 * A value as PostgreSQL's jsonb gives it back after storing it: the same JSON, with every
 * object's keys in jsonb's order (shorter keys first, then byte order), members that are
 * undefined dropped, array holes and non-finite numbers as null, dates as ISO strings. A reply
 * built from what was just stored then reads exactly like any later read of it, without reading
 * it back. Pure.
 */
const ASCII = /^[\x00-\x7F]*$/

function byJsonbOrder(a: string, b: string): number {
  if (ASCII.test(a) && ASCII.test(b)) return a.length !== b.length ? a.length - b.length : a < b ? -1 : a > b ? 1 : 0
  const x = Buffer.from(a)
  const y = Buffer.from(b)
  return x.length !== y.length ? x.length - y.length : Buffer.compare(x, y)
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
  const keys = Object.keys(obj).filter(k => obj[k] !== undefined && typeof obj[k] !== 'function' && typeof obj[k] !== 'symbol').sort(byJsonbOrder)
  const out: Record<string, unknown> = {}
  for (const k of keys) out[k] = stored(obj[k])
  return out
}
