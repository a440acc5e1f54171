/** The review and validity payloads: what is accepted, what is refused and with which words. */
import { describe, expect, it } from 'vitest'
import { reviewActionSchema, commentCreateSchema } from '../../../shared/schemas/review'
import { validityPutSchema } from '../../../shared/schemas/validity'
import { auditQuerySchema } from '../../../shared/schemas/audit'
import { resultCautions } from '../../../shared/delivery/cautions'

describe('review payloads', () => {
  it('request needs a reviewer, return needs a note, approve needs nothing', () => {
    expect(reviewActionSchema.safeParse({ action: 'request', reviewerId: 3 }).success).toBe(true)
    expect(reviewActionSchema.safeParse({ action: 'request' }).success).toBe(false)
    expect(reviewActionSchema.safeParse({ action: 'approve' }).success).toBe(true)
    const ret = reviewActionSchema.safeParse({ action: 'return', note: '   ' })
    expect(ret.success).toBe(false)
    expect(ret.error!.issues[0]!.message).toContain('Say what needs to change')
    expect(reviewActionSchema.safeParse({ action: 'approve', extra: 1 }).success).toBe(false)
    expect(reviewActionSchema.safeParse({ action: 'publish' }).success).toBe(false)
    expect(commentCreateSchema.safeParse({ body: ' ' }).success).toBe(false)
  })
})

describe('validity payloads', () => {
  it('fills defaults and refuses unknown threats, bad assessments and repeats', () => {
    const ok = validityPutSchema.parse({ notes: [{ threat: 'selection', assessment: 'partly' }] })
    expect(ok.notes[0]).toEqual({ threat: 'selection', assessment: 'partly', note: '', evidence: [] })
    expect(validityPutSchema.safeParse({ notes: [{ threat: 'luck', assessment: 'open' }] }).success).toBe(false)
    expect(validityPutSchema.safeParse({ notes: [{ threat: 'history', assessment: 'solved' }] }).success).toBe(false)
    expect(validityPutSchema.safeParse({ notes: [{ threat: 'history', assessment: 'open' }, { threat: 'history', assessment: 'partly' }] }).success).toBe(false)
    expect(validityPutSchema.safeParse({ notes: [{ threat: 'history', assessment: 'open', evidence: [{ kind: 'run', ref: '' }] }] }).success).toBe(false)
  })
})

describe('audit query', () => {
  it('takes dates as YYYY-MM-DD in order and caps the page size', () => {
    expect(auditQuerySchema.parse({ from: '2026-01-01', to: '2026-01-31' })).toMatchObject({ from: '2026-01-01', limit: 100 })
    expect(auditQuerySchema.safeParse({ from: '2026-02-01', to: '2026-01-01' }).success).toBe(false)
    expect(auditQuerySchema.safeParse({ limit: '501' }).success).toBe(false)
    expect(auditQuerySchema.parse({ entity: '', from: '' })).toMatchObject({ entity: undefined, from: undefined })
  })
})

describe('result cautions', () => {
  const base = { design: 'did' as const, nClusters: 40, preTrend: null, warnings: [] }
  it('warns of a weak design, few treated units, few clusters and non-parallel leads', () => {
    expect(resultCautions(base, 5)).toEqual([])
    expect(resultCautions({ ...base, design: 'pre_post' }, 5)[0]).toContain('weak evidence')
    expect(resultCautions(base, 1)[0]).toContain('Only 1 treated unit')
    expect(resultCautions({ ...base, nClusters: 12 }, 5)[0]).toContain('12 clusters')
    const leads = { wald: { terms: [], chi2: 9, pChi2: 0.01, F: 4.5, df1: 2, df2: 30, p: 0.02 }, slopeDiff: null }
    expect(resultCautions({ ...base, preTrend: leads }, 5)[0]).toContain('p = 0.020')
    expect(resultCautions({ ...base, warnings: ['few periods'] }, 5)).toEqual(['Few periods.'])
  })
  it('gives a single-series interrupted time series its own caution, without the clustered-error one', () => {
    const its = { design: 'its' as const, nClusters: null, preTrend: null, warnings: [], comparison: null }
    const out = resultCautions(its, 1)
    expect(out).toHaveLength(1)
    expect(out[0]).toContain('One jurisdiction\'s series alone')
    expect(out.join(' ')).not.toMatch(/cluster/i)
  })
})
