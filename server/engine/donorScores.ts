/**
 * Donor scores: how closely each candidate comparison unit tracked the treated unit (or the
 * per-period mean of several treated units) over the pre-period. Population averages over
 * the T pre-periods both series have:
 *
 *   rmspe          sqrt( mean_t (y_t - d_t)^2 )
 *   rmspeDemeaned  the same after subtracting each series' own pre-period mean
 *                  (rmspeDemeaned^2 = rmspe^2 - (mean gap)^2)
 *   correlation    Pearson r of y and d
 *   slopeDiff      OLS slope of y on the period index minus that of d (ranked by |.|)
 *   covariateDistance  sqrt( sum_k ((m_dk - m_yk) / s_k)^2 ) over the covariates, m = the
 *                  pre-period mean, s_k = standard deviation of m_dk across candidates
 *   missingShare   share of pre-periods where the candidate has no value
 *
 * Ranks: 1 = best (smallest distances, largest correlation); ties share the lowest rank
 * ("min"). The composite rank orders candidates by the weighted mean of their score ranks;
 * weights default to 1 for every score that exists. The pre-period is window.pre when
 * given, otherwise every period before the earliest start. Abadie, Diamond and Hainmueller
 * (2010, JASA) use the pre-period RMSPE the same way to judge a comparison.
 *
 * Throws EngineError 'invalid_spec' (no treated units or start), 'no_pre_periods',
 * 'non_positive_log', 'invalid_input' (a negative weight or an unknown score name).
 */
import type { DonorScoreName, DonorScoreRow, DonorScores } from '../../shared/engine/result'
import type { Spec } from '../../shared/engine/spec'
import { EngineError } from './errors'
import type { Panel } from './panel'
import { resolveRoles } from './sample'

export const donorScoreNames: DonorScoreName[] = ['rmspe', 'rmspeDemeaned', 'correlation', 'slopeDiff', 'covariateDistance']
export type DonorWeights = Partial<Record<DonorScoreName, number>>

/** Ranks with ties.method "min"; null values get null. `descending` ranks large values first. */
export function rankMin(values: (number | null)[], descending = false): (number | null)[] {
  const idx = values.map((v, i) => i).filter((i) => values[i] !== null && Number.isFinite(values[i]))
  const sign = descending ? -1 : 1
  idx.sort((a, b) => sign * ((values[a] as number) - (values[b] as number)))
  const out: (number | null)[] = values.map(() => null)
  for (let k = 0; k < idx.length; k++) {
    out[idx[k]] = k > 0 && values[idx[k]] === values[idx[k - 1]] ? out[idx[k - 1]] : k + 1
  }
  return out
}

/** OLS slope of y on x over the entries where mask is 1. */
function slope(x: Float64Array, y: Float64Array, from: number, mask: Uint8Array): number {
  let n = 0
  let sx = 0
  let sy = 0
  for (let t = 0; t < mask.length; t++) {
    if (!mask[t]) continue
    n++
    sx += x[t]
    sy += y[from + t]
  }
  const mx = sx / n
  const my = sy / n
  let sxy = 0
  let sxx = 0
  for (let t = 0; t < mask.length; t++) {
    if (!mask[t]) continue
    sxy += (x[t] - mx) * (y[from + t] - my)
    sxx += (x[t] - mx) ** 2
  }
  return sxy / sxx
}

export function scoreDonorsOnPanel(panel: Panel, spec: Spec, weightsIn?: DonorWeights): DonorScores {
  const warnings: string[] = []
  const roles = resolveRoles(panel, spec, { requireTreated: true, requireStart: !spec.window })
  // pre-period: panel periods in window.pre, or before the earliest start
  const starts = roles.treated.map((u) => roles.start[u])
  const firstStart = Math.min(...starts)
  const pre: number[] = []
  panel.periods.forEach((p, k) => {
    const inPre = roles.window ? p.ordinal >= roles.window.pre[0] && p.ordinal <= roles.window.pre[1] : p.ordinal < firstStart
    if (inPre) pre.push(k)
  })
  if (pre.length === 0) throw new EngineError('no_pre_periods', 'no pre-periods: the panel has no periods before the start to score donors on')
  const T = pre.length
  const slot = new Int32Array(panel.periods.length).fill(-1)
  pre.forEach((k, t) => (slot[k] = t))
  const x = Float64Array.from(pre, (k) => panel.periods[k].ordinal)
  const nU = panel.units.length

  // unit x pre-period matrix of outcomes (NaN = missing)
  const Y = new Float64Array(nU * T).fill(NaN)
  const yCol = panel.columns[spec.outcome]
  let nonPositive = 0
  for (let r = 0; r < panel.nRows; r++) {
    const t = slot[panel.period[r]]
    if (t < 0) continue
    let v = yCol[r]
    if (spec.transform === 'log' && !Number.isNaN(v)) {
      if (!(v > 0)) nonPositive++
      v = Math.log(v)
    }
    Y[panel.unit[r] * T + t] = v
  }
  if (nonPositive) throw new EngineError('non_positive_log', `transform "log": outcome "${spec.outcome}" has ${nonPositive} pre-period value${nonPositive > 1 ? 's' : ''} <= 0, which have no logarithm`)

  // target: mean of the treated units per pre-period
  const target = new Float64Array(T)
  const targetHas = new Uint8Array(T)
  for (let t = 0; t < T; t++) {
    let s = 0
    let c = 0
    for (const u of roles.treated) {
      const v = Y[u * T + t]
      if (!Number.isNaN(v)) {
        s += v
        c++
      }
    }
    target[t] = c ? s / c : NaN
    targetHas[t] = c ? 1 : 0
  }
  const targetPeriods = targetHas.reduce((a, b) => a + b, 0)
  if (targetPeriods < 2) throw new EngineError('no_pre_periods', `the treated unit${roles.treated.length > 1 ? 's have' : ' has'} ${targetPeriods} pre-period value${targetPeriods === 1 ? '' : 's'}; donor scores need at least 2`)
  if (targetPeriods < T) warnings.push(`the treated series lacks ${T - targetPeriods} of ${T} pre-periods; scores use the periods it has`)

  // covariate pre-period means per unit
  const covMeans = spec.covariates.map((c) => {
    const col = panel.columns[c]
    const sum = new Float64Array(nU)
    const cnt = new Float64Array(nU)
    for (let r = 0; r < panel.nRows; r++) {
      if (slot[panel.period[r]] < 0 || Number.isNaN(col[r])) continue
      sum[panel.unit[r]] += col[r]
      cnt[panel.unit[r]]++
    }
    return Float64Array.from(sum, (s, u) => (cnt[u] ? s / cnt[u] : NaN))
  })

  const candidates = roles.comparison
  const mask = new Uint8Array(T)
  const rows: DonorScoreRow[] = candidates.map((u) => {
    const base = u * T
    let m = 0
    let have = 0
    for (let t = 0; t < T; t++) {
      const ok = !Number.isNaN(Y[base + t])
      if (ok) have++
      mask[t] = ok && targetHas[t] ? 1 : 0
      m += mask[t]
    }
    const missingShare = (T - have) / T
    const exclusions = missingShare > 0 ? [{ reason: 'missing data', detail: `${T - have} of ${T} pre-periods missing` }] : []
    const empty = { rmspe: null, rmspeDemeaned: null, correlation: null, slopeDiff: null }
    let scores: Pick<DonorScoreRow, 'rmspe' | 'rmspeDemeaned' | 'correlation' | 'slopeDiff'> = empty
    if (m >= 2) {
      let st = 0
      let sd = 0
      let sq = 0
      for (let t = 0; t < T; t++) {
        if (!mask[t]) continue
        st += target[t]
        sd += Y[base + t]
        sq += (target[t] - Y[base + t]) ** 2
      }
      const mt = st / m
      const md = sd / m
      let sqDem = 0
      let cov = 0
      let vt = 0
      let vd = 0
      for (let t = 0; t < T; t++) {
        if (!mask[t]) continue
        const a = target[t] - mt
        const b = Y[base + t] - md
        sqDem += (a - b) ** 2
        cov += a * b
        vt += a * a
        vd += b * b
      }
      scores = {
        rmspe: Math.sqrt(sq / m),
        rmspeDemeaned: Math.sqrt(sqDem / m),
        correlation: vt > 0 && vd > 0 ? cov / Math.sqrt(vt * vd) : null,
        slopeDiff: slope(x, target, 0, mask) - slope(x, Y, base, mask),
      }
    } else exclusions.push({ reason: 'too few pre-periods', detail: `${m} pre-period${m === 1 ? '' : 's'} shared with the treated series` })
    return { unit: panel.units[u], ...scores, covariateDistance: null, missingShare, ranks: { rmspe: null, rmspeDemeaned: null, correlation: null, slopeDiff: null, covariateDistance: null }, exclusions, rank: null }
  })

  if (spec.covariates.length) {
    const parts = covMeans.map((means) => {
      const tgt = roles.treated.reduce((s, u) => s + means[u], 0) / roles.treated.length
      const vals = candidates.map((u) => means[u]).filter((v) => !Number.isNaN(v))
      const mean = vals.reduce((a, b) => a + b, 0) / vals.length
      const sd = Math.sqrt(vals.reduce((a, b) => a + (b - mean) ** 2, 0) / Math.max(vals.length - 1, 1))
      return { means, tgt, sd }
    })
    candidates.forEach((u, i) => {
      let s = 0
      let ok = true
      for (const p of parts) {
        if (!(p.sd > 0)) continue
        const d = (p.means[u] - p.tgt) / p.sd
        if (!Number.isFinite(d)) ok = false
        s += d * d
      }
      rows[i].covariateDistance = ok ? Math.sqrt(s) : null
    })
  }

  const weights: DonorWeights = weightsIn ?? Object.fromEntries(donorScoreNames.filter((k) => k !== 'covariateDistance' || spec.covariates.length).map((k) => [k, 1]))
  for (const [k, w] of Object.entries(weights)) {
    if (!donorScoreNames.includes(k as DonorScoreName)) throw new EngineError('invalid_input', `unknown donor score "${k}" in weights; scores are ${donorScoreNames.join(', ')}`)
    if (!(typeof w === 'number' && w >= 0)) throw new EngineError('invalid_input', `weight for "${k}" must be a number >= 0`)
  }
  const ranked: Record<DonorScoreName, (number | null)[]> = {
    rmspe: rankMin(rows.map((r) => r.rmspe)),
    rmspeDemeaned: rankMin(rows.map((r) => r.rmspeDemeaned)),
    correlation: rankMin(rows.map((r) => r.correlation), true),
    slopeDiff: rankMin(rows.map((r) => (r.slopeDiff === null ? null : Math.abs(r.slopeDiff)))),
    covariateDistance: rankMin(rows.map((r) => r.covariateDistance)),
  }
  const composite = rows.map((row, i) => {
    let s = 0
    let w = 0
    for (const k of donorScoreNames) {
      row.ranks[k] = ranked[k][i]
      const wk = weights[k] ?? 0
      if (wk > 0 && ranked[k][i] !== null) {
        s += wk * (ranked[k][i] as number)
        w += wk
      }
    }
    return w > 0 ? s / w : null
  })
  rankMin(composite).forEach((r, i) => (rows[i].rank = r))
  rows.sort((a, b) => (a.rank ?? Infinity) - (b.rank ?? Infinity) || (a.unit < b.unit ? -1 : a.unit > b.unit ? 1 : 0))
  return { target: roles.treated.map((u) => panel.units[u]), prePeriods: pre.map((k) => panel.periods[k].canonical), weights, rows, warnings }
}
