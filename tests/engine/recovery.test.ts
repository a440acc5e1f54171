// Recovery on the demo scenario: invented data with KNOWN effects (db/seed/demoScenario.ts:
// -0.8 per 1,000 at VM-BR-04's adoption in 2017-07, a further -0.4 from 2020-01), so this is a
// recovery check, not an outside reference. The default path for one adopter with two
// interventions against a comparison must cover both known changes with its intervals.
import { describe, expect, it } from 'vitest'
import { estimate } from '../../server/engine/index'
import { ADOPTED, FIRST_ADOPTER, LATER_ADOPTERS, RELATED_ADOPTER, STRENGTHENED, TRUE_EFFECT, demoRows } from '../../db/seed/demoScenario'

const adopters = new Set([FIRST_ADOPTER, ...LATER_ADOPTERS.map((a) => a.code), RELATED_ADOPTER])
const rows = demoRows().map((r) => ({ unit: r.code, period: r.period, values: { outcome: r.rate } }))
const never = [...new Set(rows.map((r) => r.unit))].filter((u) => !adopters.has(u)).sort()
const covers = (lo: number | null, hi: number | null, x: number) => lo !== null && hi !== null && lo <= x && x <= hi

describe('several interventions against a comparison: the demo\'s known effects', () => {
  it('comparative ITS against the weighted comparison: level_1 covers -0.8, level_2 covers -0.4, both by placebo units', () => {
    const r = estimate({ rows }, { design: 'its', treated: [FIRST_ADOPTER], comparison: never, its: { breaks: [ADOPTED, STRENGTHENED], seasonality: 'month', comparison: 'synthetic' } })
    const inf = r.inference!
    console.info(`demo comparative ITS (weighted): level_1 ${r.effect.estimate.toFixed(3)} [${r.effect.ciLow?.toFixed(3)}, ${r.effect.ciHigh?.toFixed(3)}], level_2 ${r.coefficients.level_2!.estimate.toFixed(3)} [${inf.terms?.level_2?.ciLow?.toFixed(3)}, ${inf.terms?.level_2?.ciHigh?.toFixed(3)}]`)
    expect(inf.method).toBe('permutation')
    expect(r.effect.term).toBe('level_1')
    expect(covers(r.effect.ciLow, r.effect.ciHigh, TRUE_EFFECT.adoption)).toBe(true)
    expect(covers(inf.terms!.level_2!.ciLow, inf.terms!.level_2!.ciHigh, TRUE_EFFECT.strengthening)).toBe(true)
    expect(r.effect.p).toBeLessThan(0.05)
  }, 30_000)

  it('difference-in-differences with phases against every never-treated municipality: phase 1 covers -0.8, the added change covers -0.4', () => {
    const r = estimate({ rows }, { design: 'did', treated: [FIRST_ADOPTER], start: ADOPTED, comparison: never, did: { phases: [STRENGTHENED] } })
    const added = r.inference!.terms!.phase_2_vs_1!
    console.info(`demo did phases: phase_1 ${r.effect.estimate.toFixed(3)} [${r.effect.ciLow?.toFixed(3)}, ${r.effect.ciHigh?.toFixed(3)}], phase_2 - phase_1 ${added.estimate.toFixed(3)} [${added.ciLow?.toFixed(3)}, ${added.ciHigh?.toFixed(3)}]`)
    expect(covers(r.effect.ciLow, r.effect.ciHigh, TRUE_EFFECT.adoption)).toBe(true)
    expect(covers(added.ciLow, added.ciHigh, TRUE_EFFECT.strengthening)).toBe(true)
  }, 30_000)
})
