import { expect, type Page, test } from '@playwright/test'
import { signInAs, signInWith, snap } from './support/auth'
import { as, DEMO } from '../tests/support/http'
import { closePool, sql } from '../tests/support/db'
import { studyWithRuns } from '../tests/support/studyFixture'

/**
 * Under the Content Security Policy and the other response headers, in Chromium: sign-in, every
 * step of a study with runs (charts included) and the Review step work with no CSP report and no
 * script error; the owner withdraws a review request from the Review step; a throttled sign-in
 * shows when to try again.
 */
// The Trends page logs a hydration mismatch with or without these headers (seen on the code before them):
// not a policy matter, so it is left out here; anything else logged as an error counts.
const KNOWN_UNRELATED = /^Hydration completed but contains mismatches\.$/

function watch(page: Page): string[] {
  const problems: string[] = []
  page.on('console', (m) => {
    if ((m.type() === 'error' && !KNOWN_UNRELATED.test(m.text())) || /Content Security Policy|Refused to/i.test(m.text())) problems.push(`console on ${page.url()}: ${m.text()}`)
  })
  page.on('pageerror', e => problems.push(`page error: ${e.message}`))
  return problems
}

test('sign-in, a study\'s pages and its charts run under the CSP with no console errors', async ({ page }) => {
  // a study on the demo scenario (db/seed), made through the API, with one estimate
  const analyst = await as('analyst')
  const study = await analyst.post('/api/studies', {
    title: `Under the policy ${Date.now().toString(36)}`,
    outcome: 'eviction_filing_rate',
    treated: ['VM-BR-04'],
    start: '2017-07',
    window: { pre: ['2012-01', '2017-06'], post: ['2017-07', '2019-12'] },
  })
  expect(study.status, JSON.stringify(study.body)).toBe(201)
  const run = await analyst.post(`/api/studies/${study.body.id}/runs`, { design: 'did' })
  expect(run.status, JSON.stringify(run.body)).toBe(201)
  const f = { studyId: study.body.id as number, runs: { did: run.body } }
  const problems = watch(page)
  await signInAs(page, 'analyst')
  for (const step of ['', '/pool', '/trends', '/estimates', '/validity', '/review']) {
    await page.goto(`/studies/${f.studyId}${step}`)
    await expect(page.getByTestId('study-title')).toBeVisible()
    if (step === '/trends') {
      for (const chart of ['chart-main', 'chart-gap']) await expect(page.getByTestId(chart).locator('canvas')).toBeVisible()
      await snap(page, 'security-csp-trends')
    }
  }
  await page.goto(`/studies/${f.studyId}/runs/${f.runs.did.id}/report`)
  await expect(page.locator('h1').first()).toBeVisible()
  expect(problems).toEqual([])
  const csp = (await page.request.get('/login')).headers()['content-security-policy']
  expect(csp).toContain('script-src')
})

test('the owner withdraws a review request from the Review step and can edit again', async ({ page }) => {
  const f = await studyWithRuns({ title: `Withdrawn ${Date.now().toString(36)}` })
  const reviewerId = (await f.analyst.get('/api/reviewers')).body.find((r: { email: string }) => r.email === DEMO.reviewer).id
  expect((await f.analyst.post(`/api/studies/${f.studyId}/review`, { action: 'request', reviewerId })).status).toBe(200)
  const problems = watch(page)
  await signInAs(page, 'analyst')
  await page.goto(`/studies/${f.studyId}/review`)
  await expect(page.getByTestId('read-only')).toContainText('in review')
  await snap(page, 'security-in-review')
  await page.getByTestId('withdraw-review').click()
  await expect(page.getByTestId('review-message')).toContainText('withdrawn')
  await expect(page.getByTestId('study-status')).toContainText('Draft')
  await expect(page.getByTestId('read-only')).toHaveCount(0)
  await snap(page, 'security-withdrawn')
  expect(problems).toEqual([])
})

test('a throttled sign-in says when to try again', async ({ page }) => {
  const admin = await as('admin')
  const email = `e2e-throttle-${Date.now()}@counterpart.test`
  expect((await admin.post('/api/users', { email, name: 'Throttled Browser', role: 'analyst', password: 'the-right-password' })).status).toBe(201)
  // nine recent failures for the account (written directly, from another address): the next attempt waits 16 s
  await sql(`INSERT INTO sign_in_attempts (email, ip, success) SELECT $1, 'e2e-elsewhere', false FROM generate_series(1, 9)`, [email])
  await signInWith(page, email, 'the-right-password')
  await expect(page.getByTestId('login-error')).toContainText('Too many failed sign-ins for this account. Try again in')
  await snap(page, 'security-throttled-sign-in')
  await sql('DELETE FROM sign_in_attempts WHERE email = $1', [email])
  await closePool()
})
