// Regression to the mean (server/engine/threats/regressionToMean.ts): the standardised prediction
// error of the last two pre-periods against the earlier pre-period's trend, computed by hand on
// invented series, and the comparison with other units at the same date (known by construction).
import { describe, expect, it } from 'vitest'
import { tQuantileAt } from '../../../server/engine/distributions'
import { regressionToMeanEvidence, spikeZ } from '../../../server/engine/threats/regressionToMean'

const periods = (n: number) => Array.from({ length: n }, (_, i) => String(2000 + i))

// earlier pre-period [10,12,12,10,10,12,12,10]: by hand, slope 0 (the products with t - 3.5
// cancel), intercept 11, SSR 8, residual SD sqrt(8 / 6)
const earlier = [10, 12, 12, 10, 10, 12, 12, 10]
const sd = Math.sqrt(8 / 6)
// prediction scale of the mean of periods 8 and 9 (tm = 8.5): sqrt(1/2 + 1/8 + (8.5 - 3.5)^2 / 42), sum (t - 3.5)^2 = 42
const scale = Math.sqrt(1 / 2 + 1 / 8 + 25 / 42)
const bound = tQuantileAt(0.975, 6) // 2.447 (t table, 6 df)

describe('regression to the mean', () => {
  it('a spike before the start: z = (15 - 11) / (sqrt(8/6) * 1.105) = 3.14 > 2.447, weakens', () => {
    const treated = [...earlier, 15, 15, 9, 9]
    const s = { periods: periods(12), nPre: 10, treated, pool: new Array(12).fill(0) }
    const r = spikeZ(s)
    expect(r.expected).toBeCloseTo(11, 12)
    expect(r.sd).toBeCloseTo(sd, 12)
    expect(r.z).toBeCloseTo(4 / (sd * scale), 12)
    expect(bound).toBeCloseTo(2.446912, 5)
    const e = regressionToMeanEvidence(s)
    expect(e.verdict).toBe('weakens')
    expect(e.figures.bound).toBeCloseTo(bound, 12)
  })

  it('a rise of 3 residual SDs is within the prediction interval of two new values: supports', () => {
    // (14 - 11) / (sqrt(8/6) * 1.105) = 2.35 < 2.447: the old rule (3 / sqrt(8/6) = 2.6 >= 2) said weakens
    const treated = [...earlier, 14, 14, 9, 9]
    const s = { periods: periods(12), nPre: 10, treated, pool: new Array(12).fill(0) }
    expect(spikeZ(s).z).toBeCloseTo(3 / (sd * scale), 12)
    expect(regressionToMeanEvidence(s).verdict).toBe('supports')
  })

  it('an ordinary last two periods: z = (12 - 11) / (sqrt(8/6) * 1.105) = 0.78, supports', () => {
    const treated = [...earlier, 12, 12, 9, 9]
    const s = { periods: periods(12), nPre: 10, treated, pool: new Array(12).fill(0) }
    expect(spikeZ(s).z).toBeCloseTo(1 / (sd * scale), 12)
    expect(regressionToMeanEvidence(s).verdict).toBe('supports')
  })

  it('the last period alone (m = 1): a dip of -3 gives z = -3 / (SD of the first nine * prediction scale)', () => {
    // first nine [10,12,12,10,10,12,12,10,11]: slope, SD and scale computed independently below
    const first = [...earlier, 11]
    const n = first.length
    const mt = (n - 1) / 2
    const my = first.reduce((a, b) => a + b, 0) / n
    const sxx = first.reduce((a, _, t) => a + (t - mt) ** 2, 0)
    const b = first.reduce((a, y, t) => a + (t - mt) * (y - my), 0) / sxx
    const ssr = first.reduce((a, y, t) => a + (y - my - b * (t - mt)) ** 2, 0)
    const expected = my + b * (n - mt)
    const treated = [...first, expected - 3, 5]
    const r = spikeZ({ periods: periods(11), nPre: 10, treated, pool: new Array(11).fill(0) }, 1)
    expect(r.z).toBeCloseTo(-3 / (Math.sqrt(ssr / (n - 2)) * Math.sqrt(1 + 1 / n + (n - mt) ** 2 / sxx)), 10)
  })

  it('a spike every candidate shares at the same date is not the treated unit\'s own: supports', () => {
    // 12 candidates with the same earlier pattern (shifted) and spikes of 4 to 5.1 at the same date; the treated
    // spike of 4 ranks low among them; with flat candidates instead it ranks above every one: weakens
    const treated = [...earlier, 15, 15, 9, 9]
    const s = { periods: periods(12), nPre: 10, treated, pool: new Array(12).fill(0) }
    const spiking = Array.from({ length: 12 }, (_, k) => ({ unit: `c${k}`, values: [...earlier.map(v => v + k), 11 + k + 4 + 0.1 * k, 11 + k + 4 + 0.1 * k, 9, 9] }))
    const shared = regressionToMeanEvidence(s, 2, spiking)
    expect(shared.verdict).toBe('supports')
    expect(shared.figures.candidatePercentile).toBeLessThan(0.95)
    expect(shared.explanation).toMatch(/other units moved as much/)
    const flat = Array.from({ length: 12 }, (_, k) => ({ unit: `c${k}`, values: [...earlier.map(v => v + k), 11 + k, 11 + k + 0.1 * (k % 3), 9, 9] }))
    const alone = regressionToMeanEvidence(s, 2, flat)
    expect(alone.verdict).toBe('weakens')
    expect(alone.figures.candidatePercentile).toBe(1)
  })
})
