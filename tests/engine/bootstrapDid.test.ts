// The wild cluster bootstrap behind a did headline rebuilds the design's own model: the two-way
// form, the 2x2 form and phases give the design's estimate (the module refuses a mismatch), and
// enumeration is used when the sign vectors are few. Panel: the shared checks' c2 (plm 2.6.2
// dataset Produc, 48 states x 1970-1986, clusters = the 9 Census regions), whose made-up
// treatment (regions 1, 4 and 7 from 1979) c2 defines.
import { describe, expect, it } from 'vitest'
import { estimate } from '../../server/engine/index'
import type { CsvRecord } from '../../server/engine/panel'
import { loadCase } from './helpers'

const c2 = loadCase('c2_produc_wild_cluster_bootstrap')
const records = (c2.panel as { records: CsvRecord[] }).records
const treated = [...new Set(records.filter((r) => r.treated === '1').map((r) => String(r.unit)))].sort()
const base = { design: 'did' as const, treated, start: 1979, clusterColumn: 'region', inference: { method: 'wild_bootstrap' as const, weights: 'rademacher' as const } }

describe('wild cluster bootstrap for each did form', () => {
  it('two-way: the c2 Rademacher enumeration (440 of 512 draws at least as large)', () => {
    const r = estimate(c2.panel, { ...base, smallSample: 'full' })
    expect(r.inference).toMatchObject({ method: 'wild_bootstrap', enumerated: true, draws: 512, weights: 'rademacher' })
    expect(Math.abs(r.inference!.p - c2.expected.rademacher.p_symmetric)).toBeLessThanOrEqual(1e-15)
    expect(r.effect.p).toBe(r.inference!.p)
  })
  it('2x2 and phases run on the design\'s own terms', () => {
    const two = estimate(c2.panel, { ...base, did: { form: '2x2' }, window: { pre: [1970, 1978], post: [1979, 1986] } })
    expect(two.inference!.method).toBe('wild_bootstrap')
    expect(two.effect.term).toBe('treatment')
    const phased = estimate(c2.panel, { ...base, did: { phases: [1983] } })
    expect(phased.effect.term).toBe('phase_1')
    expect(phased.inference!.method).toBe('wild_bootstrap')
    expect(phased.inference!.p).toBeGreaterThan(0)
  })
})
