import { expect, test } from '@playwright/test'
import { signInAs, signOut, snap } from './support/auth'

/**
 * The study workspace as an analyst uses it on the demo scenario, then as a reviewer:
 * create a study, sort the pool by a score, exclude a donor with a reason, read the trend
 * charts and the lead test, run difference-in-differences and read the estimate with its
 * cautions; the reviewer opens the same study read-only.
 */
test('an analyst builds a study on the demo data; a reviewer reads it and cannot change it', async ({ page }) => {
  const title = `Mediation first, browser ${Date.now().toString(36)}`
  await signInAs(page, 'analyst')
  await page.getByTestId('nav').getByRole('link', { name: 'Studies' }).click()
  await expect(page.getByRole('heading', { name: 'Studies' })).toBeVisible()
  await page.getByTestId('new-study').click()

  // Setup
  await page.getByLabel('Title').fill(title)
  await page.getByLabel('Question').fill('Did mediation before filing lower eviction filings in Brannvale\'s first adopter?')
  await page.getByLabel('Outcome measure').selectOption('eviction_filing_rate')
  await page.getByLabel('Treated jurisdictions').fill('VM-BR-04')
  await expect(page.getByTestId('registry-events')).toContainText('2017-07')
  await page.getByTestId('registry-events').getByRole('checkbox').first().check()
  await expect(page.getByLabel('First treated period')).toHaveValue('2017-07')
  await page.getByTestId('use-window').check()
  await page.getByLabel('Pre-period from').fill('2012-01')
  await page.getByLabel('Pre-period to').fill('2017-06')
  await page.getByLabel('Post-period from').fill('2017-07')
  await page.getByLabel('Post-period to').fill('2019-12')
  await page.getByLabel('Unemployment rate').check()
  await snap(page, 'study-create-form')
  await page.getByRole('button', { name: 'Create study' }).click()

  // Pool
  await expect(page).toHaveURL(/\/studies\/\d+\/pool$/)
  const studyUrl = page.url().replace(/\/pool$/, '')
  await expect(page.getByTestId('study-title')).toHaveText(title)
  const table = page.getByTestId('pool-table')
  await expect(table.locator('tbody tr')).toHaveCount(59)
  await page.getByTestId('sort-rmspe').click()
  const rmspe = await table.locator('tbody td[data-col="rmspe"]').allInnerTexts()
  const values = rmspe.map(t => Number(t.replace(/,/g, ''))).filter(Number.isFinite)
  expect(values.length).toBeGreaterThan(50)
  expect(values).toEqual([...values].sort((a, b) => a - b))
  await expect(table.locator('tbody tr').first()).toBeVisible()
  await expect(table).toContainText('neighbour')
  await expect(table).toContainText('related policy')
  const poolSize = Number(await page.getByTestId('pool-size').innerText())
  expect(poolSize).toBe(20)
  // exclude the first included donor, with a reason
  const firstIncluded = table.locator('tbody tr').filter({ has: page.locator('input[type=checkbox]:checked') }).first()
  const code = await firstIncluded.getAttribute('data-code')
  await firstIncluded.getByRole('checkbox').click()
  await page.getByTestId('reason-form').getByLabel(/Why exclude/).fill('a one-off court backlog in 2016')
  await page.getByTestId('reason-form').getByRole('button', { name: 'Exclude' }).click()
  await expect(page.getByTestId('pool-size')).toHaveText(String(poolSize - 1))
  await expect(table.locator(`tr[data-code="${code}"]`).getByTestId('decision-reason')).toContainText('court backlog')
  await expect(page.getByTestId('rescore-ms')).toBeVisible()
  await snap(page, 'study-pool')

  // Trends
  await page.getByTestId('study-steps').getByRole('link', { name: 'Trends' }).click()
  await expect(page.getByTestId('lead-test')).toBeVisible()
  await expect(page.getByTestId('lead-reading')).toContainText(/placebo units/)
  await expect(page.getByTestId('lead-placebo')).toContainText(/placebo units/)
  await expect(page.getByTestId('lead-test')).toContainText(/F\(\d+, \d+\)/)
  for (const chart of ['chart-main', 'chart-gap', 'chart-event', 'chart-donors']) await expect(page.getByTestId(chart).locator('canvas')).toBeVisible()
  await expect(page.getByTestId('trend-warnings')).toContainText(/seasonality/i)
  await page.getByTestId('indexed').click()
  await snap(page, 'study-trends')

  // Setup can be edited by its owner: the same form, filled in
  await page.getByTestId('study-steps').getByRole('link', { name: 'Setup' }).click()
  await page.getByTestId('edit-setup').click()
  await expect(page.getByLabel('Pre-period to')).toHaveValue('2017-06')
  await page.getByLabel('Question').fill('Did mediation before filing lower eviction filings in the first adopter, before it was strengthened?')
  await page.getByRole('button', { name: 'Save the setup' }).click()
  await expect(page.getByTestId('setup-step')).toContainText('before it was strengthened')

  // Estimates
  await page.getByTestId('study-steps').getByRole('link', { name: 'Estimates' }).click()
  await page.getByLabel('Design').selectOption('did')
  await page.getByTestId('run-button').click()
  await expect(page.getByTestId('estimate-value')).toHaveText(/^-?\d/)
  const estimate = Number(await page.getByTestId('estimate-value').innerText())
  expect(estimate).toBeLessThan(0)
  await expect(page.getByTestId('latest-estimate')).toContainText('95% interval')
  await expect(page.getByTestId('cautions').first()).toContainText('parallel')
  await expect(page.getByTestId('cautions').first()).toContainText('disclosure')
  await expect(page.getByTestId('runs-table').locator('tbody tr')).toHaveCount(1)
  // run it again: same data, so the comparison says so and the estimate does not move
  await page.getByTestId('runs-table').getByRole('button', { name: 'Run again' }).click()
  await expect(page.getByTestId('runs-table').locator('tbody tr')).toHaveCount(2)
  await expect(page.getByTestId('what-changed')).toContainText('the same data')
  await page.getByTestId('runs-table').getByRole('checkbox').first().check()
  await page.getByTestId('runs-table').getByRole('checkbox').nth(1).check()
  await expect(page.getByTestId('side-by-side')).toContainText('Data fingerprint')
  await snap(page, 'study-estimates')
  await signOut(page)

  // A reviewer sees the same study, read-only
  await signInAs(page, 'reviewer')
  await page.goto('/studies')
  await expect(page.getByTestId('studies-table')).toContainText(title)
  await expect(page.getByTestId('new-study')).toHaveCount(0)
  await page.getByRole('link', { name: title }).click()
  await expect(page.getByTestId('read-only')).toBeVisible()
  await expect(page.getByTestId('setup-step')).toContainText('VM-BR-04')
  await expect(page.getByTestId('edit-setup')).toHaveCount(0)
  await page.goto(`${studyUrl}/pool`)
  await expect(page.getByTestId('pool-table').locator(`tr[data-code="${code}"]`).getByTestId('decision-reason')).toContainText('court backlog')
  const boxes = page.getByTestId('pool-table').getByRole('checkbox')
  expect(await boxes.count()).toBe(59)
  await expect(boxes.first()).toBeDisabled()
  await expect(page.getByTestId('use-suggested')).toHaveCount(0)
  await page.goto(`${studyUrl}/estimates`)
  await expect(page.getByTestId('run-form')).toHaveCount(0)
  await expect(page.getByTestId('runs-table').getByRole('button', { name: 'Run again' })).toHaveCount(0)
  await expect(page.getByTestId('estimate-value')).toHaveText(/^-?\d/)
  await expect(page.getByTestId('cautions').first()).toBeVisible()
  // and the server refuses a change even if one is attempted
  const id = studyUrl.split('/').pop()
  const refused = await page.request.post(`/api/studies/${id}/runs`, { data: { design: 'did' } })
  expect(refused.status()).toBe(403)
  await snap(page, 'study-reviewer-read-only')
})
