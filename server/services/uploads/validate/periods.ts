/** Periods read from cells or headers, each distinct text parsed once. Pure. */
import type { MeasureFrequency } from '../../../../shared/schemas/registry'
import { formatPeriod, parsePeriod, PeriodError } from '../../../../shared/utils/periods'
import { clip } from '../limits'
import type { Cell } from '../readTable'
import { cellText } from './cells'
import type { PeriodSlot } from './types'

const DAY_MS = 86_400_000

/** The period of `frequency` that holds a spreadsheet date. */
export function periodOfDate(d: Date, frequency: MeasureFrequency): string {
  const y = d.getUTCFullYear()
  const m = d.getUTCMonth() + 1
  switch (frequency) {
    case 'year': return String(y)
    case 'quarter': return `${y}-Q${Math.ceil(m / 3)}`
    case 'month': return `${y}-${String(m).padStart(2, '0')}`
    case 'day': return d.toISOString().slice(0, 10)
    case 'week': {
      const day = Math.floor(d.getTime() / DAY_MS)
      const weekday = (((day + 3) % 7) + 7) % 7
      return formatPeriod('week', (day - weekday + 3) / 7)
    }
  }
}

/**
 * A reader that gives each distinct period a slot number (0, 1, 2, ...) or a problem text.
 * Each distinct cell text is read once (per frequency); texts naming the same period (" 2020-01"
 * and "2020-01") share its slot, so the duplicate check sees them as one cell.
 */
export function periodReader(): (c: Cell, frequency: MeasureFrequency) => PeriodSlot | string {
  const caches = new Map<MeasureFrequency, Map<string, PeriodSlot | string>>()
  const slotOf = new Map<string, number>()
  return (c, frequency) => {
    let cache = caches.get(frequency)
    if (!cache) caches.set(frequency, (cache = new Map()))
    const raw = c instanceof Date ? `date:${c.getTime()}` : cellText(c)
    const hit = cache.get(raw)
    if (hit !== undefined) return hit
    const text = raw.trim()
    let out: PeriodSlot | string
    if (c == null || text === '') out = 'No period given.'
    else {
      try {
        let canonical: string
        if (c instanceof Date) canonical = periodOfDate(c, frequency)
        else {
          const p = parsePeriod(typeof c === 'number' ? c : text)
          if (p.frequency !== frequency) throw new PeriodError(`"${clip(text)}" is a ${p.frequency === 'integer' ? 'whole number' : p.frequency}, but the measure is recorded by ${frequency}.`)
          canonical = p.canonical
        }
        let slot = slotOf.get(canonical)
        if (slot === undefined) slotOf.set(canonical, (slot = slotOf.size))
        out = { canonical, slot }
      }
      catch (e) {
        out = e instanceof PeriodError && text.length <= 40 ? e.message.replace(/^parsePeriod: /, '') : `Cannot read "${clip(text)}" as a period.`
      }
    }
    cache.set(raw, out)
    return out
  }
}
