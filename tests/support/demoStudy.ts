/**
 * The seeded demo scenario as an analyst sets it up through the API: a study of eviction
 * filings per 1,000 renter households in VM-BR-04 (mediation from 2017-07), the suggested
 * pool, and a difference-in-differences run. Used by the Robustness step's user flow.
 * Free of test-runner imports.
 */
import type { Client } from './http'

/** The demo's eviction-filing study of VM-BR-04 (a rate, monthly, adopted 2017-07). */
export function demoStudyPayload(title: string) {
  return {
    title,
    question: 'Did mediation before an eviction filing lower filings in VM-BR-04?',
    outcome: 'eviction_filings',
    transform: 'rate',
    denominator: 'renter_households',
    treated: ['VM-BR-04'],
    start: '2017-07',
    window: { pre: ['2014-01', '2017-06'], post: ['2017-07', '2019-12'] },
  }
}

export async function demoStudyWithRun(analyst: Client, title: string): Promise<{ studyId: number, run: any }> {
  const study = await analyst.post('/api/studies', demoStudyPayload(title))
  if (study.status !== 201) throw new Error(`study: ${study.status} ${JSON.stringify(study.body).slice(0, 300)}`)
  const run = await analyst.post(`/api/studies/${study.body.id}/runs`, { design: 'did' })
  if (run.status !== 201) throw new Error(`run: ${run.status} ${JSON.stringify(run.body).slice(0, 300)}`)
  return { studyId: study.body.id, run: run.body }
}
