/**
 * A study with runs, made through the API as people would: an admin registers six invented
 * jurisdictions, an outcome and a covariate measure and a source; the analyst uploads a
 * small CSV release, waits for its import job, creates the study, decides the pool and
 * runs a difference-in-differences and an event study.
 *
 *   const f = await studyWithRuns()            // f.studyId, f.runs.did, f.runs.event, f.codes, f.csvRows
 * Options let a test put risky text (formula-like) into the question and a pool reason.
 * Free of test-runner imports, so the API suite and the Playwright specs both use it.
 */
import { as, type Client } from './http'

export interface StudyFixture {
  tag: string
  admin: Client
  analyst: Client
  reviewer: Client
  codes: { treated: string, comparison: string[], excluded: string }
  outcome: string
  covariate: string
  studyId: number
  runs: { did: any, event: any }
  /** The uploaded values by `${code}|${year}`: {outcome, covariate}. */
  csvRows: Map<string, { outcome: number, covariate: number }>
  releaseId: number
}

export interface FixtureOptions {
  question?: string
  excludedReason?: string
  title?: string
}

function ok(res: { status: number, body: unknown }, expected: number, what: string) {
  if (res.status !== expected) throw new Error(`${what}: expected ${expected}, got ${res.status}: ${JSON.stringify(res.body).slice(0, 500)}`)
}

const tagOf = () => `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 5)}`.toUpperCase()

export async function importCsv(client: Client, sourceId: number, csv: string, mapping: unknown, label: string) {
  const form = new FormData()
  form.append('file', new Blob([Buffer.from(csv)]), 'roads-demo.csv')
  form.append('mapping', JSON.stringify(mapping))
  form.append('label', label)
  const up = await client.request('POST', `/api/sources/${sourceId}/releases`, form)
  ok(up, 202, 'upload')
  for (const start = Date.now(); Date.now() - start < 30_000;) {
    const job = await client.get(`/api/jobs/${up.body.jobId}`)
    if (job.body?.state === 'done') return up.body.releaseId as number
    if (job.body?.state === 'failed') throw new Error(`import failed: ${JSON.stringify(job.body)}`)
    await new Promise(r => setTimeout(r, 150))
  }
  throw new Error('import job did not finish in 30 s')
}

export async function studyWithRuns(options: FixtureOptions = {}): Promise<StudyFixture> {
  const tag = tagOf()
  const [admin, analyst, reviewer] = await Promise.all([as('admin'), as('analyst'), as('reviewer')])
  const all = ['A', 'B', 'C', 'D', 'E', 'F', 'G'].map(l => `S${tag}-${l}`)
  const [treated, ...others] = all as [string, ...string[]]
  const excluded = others[others.length - 1]!
  const comparison = others.slice(0, -1)
  const outcome = `deaths_${tag.toLowerCase()}`
  const covariate = `income_${tag.toLowerCase()}`

  for (const code of all) ok(await admin.post('/api/jurisdictions', { code, name: `Demo county ${code}`, kind: 'county' }), 201, `jurisdiction ${code}`)
  ok(await admin.post('/api/measures', { key: outcome, label: 'Road deaths', unit: 'deaths', kind: 'outcome', frequency: 'year' }), 201, 'outcome measure')
  ok(await admin.post('/api/measures', { key: covariate, label: 'Median income', unit: 'thousand', kind: 'covariate', frequency: 'year' }), 201, 'covariate measure')
  const source = await admin.post('/api/sources', { name: `Demo road statistics ${tag}`, publisher: 'Demo Statistics Office', url: 'https://example.test/roads', licence: 'open demo' })
  ok(source, 201, 'source')

  const csvRows = new Map<string, { outcome: number, covariate: number }>()
  const lines = ['code,year,deaths,income']
  all.forEach((code, u) => {
    for (let year = 2001; year <= 2012; year++) {
      const t = year - 2001
      const wiggle = ((u * 7 + t * 3) % 5) * 0.25
      const effect = code === treated && year >= 2007 ? -2.5 : 0
      const value = Math.round((30 + u * 1.5 + 0.4 * t + wiggle + effect) * 100) / 100
      const income = Math.round((40 + u + t * 0.3 + ((u * 3 + t * t) % 7) * 0.4) * 10) / 10
      csvRows.set(`${code}|${year}`, { outcome: value, covariate: income })
      lines.push(`${code},${year},${value},${income}`)
    }
  })
  const releaseId = await importCsv(analyst, source.body.id, `${lines.join('\n')}\n`, { layout: 'long', jurisdiction: 'code', period: 'year', values: { deaths: outcome, income: covariate } }, '2026 demo edition')

  const study = await analyst.post('/api/studies', {
    title: options.title ?? `Helmet rule ${tag}`,
    question: options.question ?? 'Did the helmet rule lower road deaths in the treated county?',
    outcome,
    treated: [treated],
    start: '2007',
    covariates: [covariate],
  })
  ok(study, 201, 'study')
  const studyId = study.body.id as number
  ok(await analyst.put(`/api/studies/${studyId}/pool`, {
    decisions: [
      ...comparison.map(jurisdiction => ({ jurisdiction, included: true })),
      { jurisdiction: excluded, included: false, reason: options.excludedReason ?? 'Adopted a similar rule in 2006' },
    ],
  }), 200, 'pool')
  const did = await analyst.post(`/api/studies/${studyId}/runs`, { design: 'did' })
  ok(did, 201, 'did run')
  const event = await analyst.post(`/api/studies/${studyId}/runs`, { design: 'event_study', options: { eventWindow: { from: -3, to: 3 } } })
  ok(event, 201, 'event-study run')
  return { tag, admin, analyst, reviewer, codes: { treated, comparison, excluded }, outcome, covariate, studyId, runs: { did: did.body, event: event.body }, csvRows, releaseId }
}
