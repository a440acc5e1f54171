// Calibration of the default headline (spec inference "auto") on data we did not tune to.
// Fatalities: the public panel of the shared checks (a1: AER 1.2.10 dataset Fatalities, 48 US
// states x 1982-1988, traffic deaths per 10,000). Every state in turn is made a fake single
// adopter in 1985 with the other 47 as comparison units: no state adopted anything then, so
// about 5% of 95% intervals should exclude zero (the bar: at most 10%).
// Demo (invented data with a known effect, a recovery check, not an outside reference): the
// default path still detects VM-BR-04's effect against every never-treated municipality.
import { describe, expect, it } from 'vitest'
import { estimate } from '../../server/engine/index'
import type { EstimateResult } from '../../shared/engine/result'
import { ADOPTED, FIRST_ADOPTER, LATER_ADOPTERS, RELATED_ADOPTER, demoRows } from '../../db/seed/demoScenario'
import { loadCase } from './helpers'

const excludesZero = (r: EstimateResult) => (r.effect.ciLow !== null && r.effect.ciLow > 0) || (r.effect.ciHigh !== null && r.effect.ciHigh < 0)

describe('calibration on placebo units of a real panel (Fatalities, 48 states)', () => {
  const { panel } = loadCase('a1_fatalities_twfe_beertax')
  const states = [...new Set((panel as { records: { unit: string }[] }).records.map((r) => r.unit))].sort()

  it('at most 10% of the default 95% intervals exclude zero (the analytic ones, for contrast, are reported)', () => {
    let auto = 0
    let analytic = 0
    for (const s of states) {
      const spec = { design: 'did' as const, treated: [s], start: 1985, comparison: states.filter((x) => x !== s) }
      const r = estimate(panel, spec)
      expect(r.inference!.method).toBe('permutation')
      if (excludesZero(r)) auto++
      if (excludesZero(estimate(panel, { ...spec, inference: { method: 'analytic' } }))) analytic++
    }
    console.info(`Fatalities fake adopters in 1985: default ${auto}/48 intervals exclude zero, analytic cluster-robust ${analytic}/48`)
    expect(states).toHaveLength(48)
    expect(auto).toBeLessThanOrEqual(4)
  })
})

describe('the demo effect is still detected by the default spec (recovery check)', () => {
  const adopters = new Set([FIRST_ADOPTER, ...LATER_ADOPTERS.map((a) => a.code), RELATED_ADOPTER])
  const rows = demoRows().map((r) => ({ unit: r.code, period: r.period, values: { outcome: r.rate } }))
  const never = [...new Set(rows.map((r) => r.unit))].filter((u) => !adopters.has(u)).sort()

  it('VM-BR-04 against every never-treated municipality: the placebo interval excludes zero', () => {
    const r = estimate({ rows }, { design: 'did', treated: [FIRST_ADOPTER], start: ADOPTED, comparison: never })
    console.info(`demo VM-BR-04: estimate ${r.effect.estimate.toFixed(3)}, p ${r.effect.p.toFixed(4)}, interval ${r.effect.ciLow?.toFixed(3)} to ${r.effect.ciHigh?.toFixed(3)} (${r.inference!.method}, ${r.inference!.draws} placebos)`)
    expect(never).toHaveLength(55)
    expect(r.inference!.method).toBe('permutation')
    expect(r.effect.p).toBeLessThan(0.05)
    expect(excludesZero(r)).toBe(true)
  })
})
