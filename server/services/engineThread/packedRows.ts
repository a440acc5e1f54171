/**
 * Study rows packed for a worker thread: the codes and periods once, indexes and values in
 * typed arrays (moved, not copied, with postMessage), so handing thousands of rows to the
 * engine thread costs the web process almost nothing. unpackRows() gives back rows equal to
 * the ones packed: same order, same keys, null kept apart from a number. Pure.
 */
import type { StudyRow } from '../studies/fingerprint'

export interface PackedRows {
  units: string[]
  periods: string[]
  unit: Int32Array
  period: Int32Array
  keys: string[]
  /** Per key: 0 key absent, 1 null, 2 a number (in values). */
  state: Uint8Array[]
  values: Float64Array[]
}

export function packRows(rows: readonly StudyRow[]): PackedRows {
  const n = rows.length
  const unitAt = new Map<string, number>()
  const periodAt = new Map<string, number>()
  const keyAt = new Map<string, number>()
  const packed: PackedRows = { units: [], periods: [], unit: new Int32Array(n), period: new Int32Array(n), keys: [], state: [], values: [] }
  for (let i = 0; i < n; i++) {
    const r = rows[i]!
    let u = unitAt.get(r.jurisdiction)
    if (u === undefined) unitAt.set(r.jurisdiction, (u = packed.units.push(r.jurisdiction) - 1))
    let p = periodAt.get(r.period)
    if (p === undefined) periodAt.set(r.period, (p = packed.periods.push(r.period) - 1))
    packed.unit[i] = u
    packed.period[i] = p
    for (const key in r.values) {
      const v = r.values[key]
      if (v === undefined) continue
      let k = keyAt.get(key)
      if (k === undefined) {
        keyAt.set(key, (k = packed.keys.push(key) - 1))
        packed.state.push(new Uint8Array(n))
        packed.values.push(new Float64Array(n))
      }
      if (v === null) packed.state[k]![i] = 1
      else {
        packed.state[k]![i] = 2
        packed.values[k]![i] = v
      }
    }
  }
  return packed
}

export function unpackRows(packed: PackedRows): StudyRow[] {
  const n = packed.unit.length
  const out: StudyRow[] = new Array(n)
  for (let i = 0; i < n; i++) {
    const values: Record<string, number | null> = {}
    for (let k = 0; k < packed.keys.length; k++) {
      const s = packed.state[k]![i]
      if (s === 1) values[packed.keys[k]!] = null
      else if (s === 2) values[packed.keys[k]!] = packed.values[k]![i]!
    }
    out[i] = { jurisdiction: packed.units[packed.unit[i]!]!, period: packed.periods[packed.period[i]!]!, values }
  }
  return out
}

/** The buffers postMessage may move to the thread instead of copying. */
export function rowBuffers(packed: PackedRows): ArrayBuffer[] {
  return [packed.unit, packed.period, ...packed.state, ...packed.values].map(a => a.buffer as ArrayBuffer)
}
