/**
 * Rates (mapping.rates): value = count / denominator x per, for every jurisdiction and period
 * where the file holds both; the rate is a measure of its own (created on import when the
 * registry lacks it, with the count's frequency). Pure.
 */
import type { RateRequest } from '../../../../shared/schemas/uploads'
import type { NewMeasure, Observations, Registry, Report } from './types'

const perText = (per: number) => (per === 1000 ? '1,000' : '100,000')

export function addRates(obs: Observations, rates: RateRequest[], registry: Registry, report: Report, warnings: string[]): { observations: Observations, newMeasures: NewMeasure[] } {
  const newMeasures: NewMeasure[] = []
  const extra: { j: number, slot: number, p: string, v: number }[] = []
  const measureKeys = [...obs.measureKeys]
  for (const rate of rates) {
    const count = registry.measures.get(rate.count)
    const denominator = registry.measures.get(rate.denominator)
    const countSlot = obs.measureKeys.indexOf(rate.count)
    const denSlot = obs.measureKeys.indexOf(rate.denominator)
    if (!count || countSlot < 0) {
      report(null, null, `Rate ${rate.key}: the file holds no values of the count measure "${rate.count}".`)
      continue
    }
    if (!denominator || denSlot < 0) {
      report(null, null, `Rate ${rate.key}: the file holds no values of the denominator measure "${rate.denominator}".`)
      continue
    }
    if (count.frequency !== denominator.frequency) {
      report(null, null, `Rate ${rate.key}: ${rate.count} is recorded by ${count.frequency} but ${rate.denominator} by ${denominator.frequency}.`)
      continue
    }
    const existing = registry.measures.get(rate.key)
    if (existing && existing.frequency !== count.frequency) {
      report(null, null, `Rate ${rate.key}: the measure exists with frequency ${existing.frequency}, but ${rate.count} is recorded by ${count.frequency}.`)
      continue
    }
    if (obs.measureKeys.includes(rate.key)) {
      report(null, null, `Rate ${rate.key}: the file already holds values of "${rate.key}".`)
      continue
    }
    if (!existing) {
      newMeasures.push({
        key: rate.key,
        label: rate.label ?? `${count.label} per ${perText(rate.per)} ${denominator.label}`,
        unit: `per ${perText(rate.per)} ${denominator.label.toLowerCase()}`,
        kind: 'outcome',
        frequency: count.frequency,
      })
    }
    const slot = measureKeys.length
    measureKeys.push(rate.key)
    const den = new Map<string, number>()
    for (let i = 0; i < obs.length; i++) if (obs.measureIndex[i] === denSlot) den.set(`${obs.jurisdictionIds[i]}|${obs.periods[i]}`, obs.values[i]!)
    let noDenominator = 0
    let zero = 0
    for (let i = 0; i < obs.length; i++) {
      if (obs.measureIndex[i] !== countSlot) continue
      const d = den.get(`${obs.jurisdictionIds[i]}|${obs.periods[i]}`)
      if (d === undefined) noDenominator++
      else if (d === 0) zero++
      else extra.push({ j: obs.jurisdictionIds[i]!, slot, p: obs.periods[i]!, v: (obs.values[i]! / d) * rate.per })
    }
    if (noDenominator) warnings.push(`Rate ${rate.key}: ${noDenominator} count value(s) have no ${rate.denominator} for the same jurisdiction and period; no rate for them.`)
    if (zero) warnings.push(`Rate ${rate.key}: ${zero} ${rate.denominator} value(s) are 0; no rate for them.`)
  }
  if (!extra.length) return { observations: { ...obs, measureKeys }, newMeasures }
  const length = obs.length + extra.length
  const out: Observations = {
    length,
    jurisdictionIds: new Int32Array(length),
    measureIndex: new Uint16Array(length),
    measureKeys,
    periods: obs.periods.slice(0, obs.length),
    values: new Float64Array(length),
  }
  out.jurisdictionIds.set(obs.jurisdictionIds.subarray(0, obs.length))
  out.measureIndex.set(obs.measureIndex.subarray(0, obs.length))
  out.values.set(obs.values.subarray(0, obs.length))
  extra.forEach((e, k) => {
    const i = obs.length + k
    out.jurisdictionIds[i] = e.j
    out.measureIndex[i] = e.slot
    out.periods.push(e.p)
    out.values[i] = e.v
  })
  return { observations: out, newMeasures }
}
