/**
 * Period helpers shared by the statistics engine, the upload importer and the browser.
 *
 * A period is written in one of these forms (surrounding spaces are ignored):
 * - integer: "-3", "0", "17" (any whole number that is not a plain four-digit year)
 * - year: "1979" (four digits, 1000-2999)
 * - quarter: "1979-Q2", "1979Q2", "1979-q2", "1979 Q2"
 * - month: "1979-03", "1979-3"
 * - ISO week: "1979-W05", "1979W05" (weeks start on Monday, week 1 holds the first Thursday)
 * - day: ISO date "1979-03-15", optionally followed by a midnight time "T00:00:00Z"
 *
 * parsePeriod returns the frequency, the canonical text ("1979", "1979-Q2", "1979-03",
 * "1979-W05", "1979-03-15", integers as written without leading zeros) and an ordinal that
 * is consecutive within a frequency: the next month, quarter, week or day has ordinal + 1,
 * so gaps and "time = 1..N over consecutive periods" follow from ordinal differences.
 * Years and integers share one scale (ordinal = the number), so a column mixing "1979" and
 * "12" is read as integers (see commonFrequency).
 *
 * Everything here throws PeriodError with a message naming the text that failed.
 * Dependency-free on purpose: used on the server, in the CLI and in the browser.
 */

export type PeriodFrequency = 'year' | 'quarter' | 'month' | 'week' | 'day' | 'integer'

export interface Period {
  frequency: PeriodFrequency
  /** Canonical text: "1979", "1979-Q2", "1979-03", "1979-W05", "1979-03-15", "12". */
  canonical: string
  /** Consecutive within a frequency (years and integers: the number itself). */
  ordinal: number
}

export class PeriodError extends Error {
  constructor(message: string) {
    super(message)
    this.name = 'PeriodError'
  }
}

const EXPECTED = 'expected an integer, a year (1979), "YYYY-MM", "YYYY-Qn", "YYYY-Www" or an ISO date "YYYY-MM-DD"'
const DAY_MS = 86_400_000

const pad = (n: number, width: number): string => String(n).padStart(width, '0')

/** Days since 1970-01-01 of a calendar date, or NaN when the date does not exist. */
function dayNumber(year: number, month: number, day: number): number {
  const ms = Date.UTC(year, month - 1, day)
  const d = new Date(ms)
  // Date.UTC maps years 0-99 to 1900-1999; setUTCFullYear undoes that.
  d.setUTCFullYear(year)
  if (d.getUTCFullYear() !== year || d.getUTCMonth() !== month - 1 || d.getUTCDate() !== day) return NaN
  return Math.round(d.getTime() / DAY_MS)
}

/** Day number of the Monday that starts ISO week 1 of `year`. */
function isoWeekOneMonday(year: number): number {
  const jan4 = dayNumber(year, 1, 4)
  const weekday = (((jan4 + 3) % 7) + 7) % 7 // 0 = Monday (1970-01-01 was a Thursday)
  return jan4 - weekday
}

function isoWeeksIn(year: number): number {
  return (isoWeekOneMonday(year + 1) - isoWeekOneMonday(year)) / 7
}

/** Reads one period; numbers (from spreadsheets) are accepted as integers or years. */
export function parsePeriod(text: string | number): Period {
  if (typeof text === 'number') {
    if (!Number.isInteger(text)) throw new PeriodError(`parsePeriod: ${text} is not a whole number; ${EXPECTED}`)
    return parsePeriod(String(text))
  }
  if (typeof text !== 'string') throw new PeriodError(`parsePeriod: period must be text, got ${typeof text}`)
  const s = text.trim()
  if (s === '') throw new PeriodError(`parsePeriod: empty period; ${EXPECTED}`)
  let m: RegExpExecArray | null

  if ((m = /^[+-]?\d+$/.exec(s))) {
    const n = Number(s)
    if (!Number.isSafeInteger(n)) throw new PeriodError(`parsePeriod: "${text}" is too large to be a period`)
    if (/^\d{4}$/.test(s) && n >= 1000 && n <= 2999) return { frequency: 'year', canonical: s, ordinal: n }
    return { frequency: 'integer', canonical: String(n), ordinal: n }
  }
  if ((m = /^(\d{4})[- ]?[Qq]([1-4])$/.exec(s))) {
    const year = Number(m[1])
    const q = Number(m[2])
    return { frequency: 'quarter', canonical: `${m[1]}-Q${q}`, ordinal: year * 4 + (q - 1) }
  }
  if ((m = /^(\d{4})-?[Ww](\d{1,2})$/.exec(s))) {
    const year = Number(m[1])
    const week = Number(m[2])
    if (week < 1 || week > isoWeeksIn(year)) {
      throw new PeriodError(`parsePeriod: "${text}" names week ${week}, but ${year} has ${isoWeeksIn(year)} ISO weeks`)
    }
    return { frequency: 'week', canonical: `${m[1]}-W${pad(week, 2)}`, ordinal: (isoWeekOneMonday(year) + 3) / 7 + week - 1 }
  }
  if ((m = /^(\d{4})-(\d{1,2})$/.exec(s))) {
    const year = Number(m[1])
    const month = Number(m[2])
    if (month < 1 || month > 12) throw new PeriodError(`parsePeriod: "${text}" has month ${month}; months run 1-12`)
    return { frequency: 'month', canonical: `${m[1]}-${pad(month, 2)}`, ordinal: year * 12 + (month - 1) }
  }
  if ((m = /^(\d{4})-(\d{2})-(\d{2})(?:[T ]00:00(?::00(?:\.0+)?)?(?:Z|[+-]00:?00)?)?$/.exec(s))) {
    const year = Number(m[1])
    const month = Number(m[2])
    const day = Number(m[3])
    const n = dayNumber(year, month, day)
    if (Number.isNaN(n)) throw new PeriodError(`parsePeriod: "${text}" is not a calendar date`)
    return { frequency: 'day', canonical: `${m[1]}-${m[2]}-${m[3]}`, ordinal: n }
  }
  throw new PeriodError(`parsePeriod: cannot read "${text}" as a period; ${EXPECTED}`)
}

/** The frequency of one period text. */
export function frequencyOf(text: string | number): PeriodFrequency {
  return parsePeriod(text).frequency
}

/** True when the two frequencies share an ordinal scale (equal, or year with integer). */
export function sameScale(a: PeriodFrequency, b: PeriodFrequency): boolean {
  if (a === b) return true
  return (a === 'year' || a === 'integer') && (b === 'year' || b === 'integer')
}

/**
 * The one frequency of a list of periods: years mixed with other integers read as
 * 'integer'; any other mix throws, naming the first two conflicting texts.
 */
export function commonFrequency(texts: Iterable<string | number | Period>): PeriodFrequency {
  let freq: PeriodFrequency | null = null
  let first = ''
  for (const t of texts) {
    const p = typeof t === 'object' ? t : parsePeriod(t)
    if (freq === null) {
      freq = p.frequency
      first = p.canonical
    } else if (freq !== p.frequency) {
      if (!sameScale(freq, p.frequency)) {
        throw new PeriodError(`periods mix frequencies: "${first}" is a ${freq}, "${p.canonical}" is a ${p.frequency}`)
      }
      freq = 'integer'
    }
  }
  if (freq === null) throw new PeriodError('commonFrequency: no periods given')
  return freq
}

function asPeriod(p: string | number | Period): Period {
  return typeof p === 'object' ? p : parsePeriod(p)
}

/** Sort comparator: negative when a comes before b. Throws when the frequencies differ. */
export function comparePeriods(a: string | number | Period, b: string | number | Period): number {
  const pa = asPeriod(a)
  const pb = asPeriod(b)
  if (!sameScale(pa.frequency, pb.frequency)) {
    throw new PeriodError(`comparePeriods: cannot compare "${pa.canonical}" (${pa.frequency}) with "${pb.canonical}" (${pb.frequency})`)
  }
  return pa.ordinal - pb.ordinal
}

/** Canonical text of the period with the given ordinal (inverse of parsePeriod). */
export function formatPeriod(frequency: PeriodFrequency, ordinal: number): string {
  if (!Number.isInteger(ordinal)) throw new PeriodError(`formatPeriod: ordinal ${ordinal} is not a whole number`)
  switch (frequency) {
    case 'integer':
      return String(ordinal)
    case 'year':
      if (ordinal < 1000 || ordinal > 2999) throw new PeriodError(`formatPeriod: ${ordinal} is outside the years 1000-2999`)
      return String(ordinal)
    case 'quarter':
      return `${pad(Math.floor(ordinal / 4), 4)}-Q${(((ordinal % 4) + 4) % 4) + 1}`
    case 'month':
      return `${pad(Math.floor(ordinal / 12), 4)}-${pad((((ordinal % 12) + 12) % 12) + 1, 2)}`
    case 'week': {
      const thursday = ordinal * 7 // day number of that week's Thursday (day 0 was a Thursday)
      const year = new Date(thursday * DAY_MS).getUTCFullYear()
      const week = (thursday - 3 - isoWeekOneMonday(year)) / 7 + 1
      return `${pad(year, 4)}-W${pad(week, 2)}`
    }
    case 'day': {
      const d = new Date(ordinal * DAY_MS)
      return `${pad(d.getUTCFullYear(), 4)}-${pad(d.getUTCMonth() + 1, 2)}-${pad(d.getUTCDate(), 2)}`
    }
  }
}

/** Every period from `from` to `to` inclusive, as canonical texts. Throws if to is before from. */
export function periodRange(from: string | number | Period, to: string | number | Period, maxLength = 1_000_000): string[] {
  const a = asPeriod(from)
  const b = asPeriod(to)
  const diff = comparePeriods(a, b)
  if (diff > 0) throw new PeriodError(`periodRange: "${a.canonical}" comes after "${b.canonical}"`)
  const n = b.ordinal - a.ordinal + 1
  if (n > maxLength) throw new PeriodError(`periodRange: ${n} periods from "${a.canonical}" to "${b.canonical}" is more than ${maxLength}`)
  const freq: PeriodFrequency = a.frequency === b.frequency ? a.frequency : 'integer'
  const out: string[] = new Array(n)
  for (let i = 0; i < n; i++) out[i] = formatPeriod(freq, a.ordinal + i)
  return out
}

/**
 * Season of a dated period: month of year 1-12 (monthly or daily periods) or quarter 1-4
 * (quarterly, monthly or daily periods). Throws for years, weeks and integers, which carry
 * no season (use a season column instead).
 */
export function seasonOf(period: string | number | Period, season: 'month' | 'quarter'): number {
  const p = asPeriod(period)
  let month: number
  if (p.frequency === 'month') month = (((p.ordinal % 12) + 12) % 12) + 1
  else if (p.frequency === 'day') month = new Date(p.ordinal * DAY_MS).getUTCMonth() + 1
  else if (p.frequency === 'quarter' && season === 'quarter') return (((p.ordinal % 4) + 4) % 4) + 1
  else throw new PeriodError(`seasonOf: "${p.canonical}" is a ${p.frequency} and has no ${season} of year`)
  return season === 'month' ? month : Math.ceil(month / 3)
}
