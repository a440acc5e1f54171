import { expect, test } from '@playwright/test'
import { gotoHydrated, signInAs, snap } from './support/auth'

/**
 * Adoption at different times: the demo's four adopters as one study. The Estimates step offers
 * the staggered design first and says why; its event-time and cohort charts render; a two-way
 * run of the same study shows the decomposition of its estimate.
 */
test('an analyst studies four adopters with different starts: group-time effects and the decomposition', async ({ page }) => {
  test.setTimeout(150_000)
  const adopters: [string, string][] = [['VM-BR-04', '2017-07'], ['VM-HO-07', '2019-04'], ['VM-SA-02', '2021-01'], ['VM-KE-09', '2022-10']]
  await signInAs(page, 'analyst')
  await gotoHydrated(page, '/studies/new')
  await page.getByLabel('Title').fill(`Four adopters ${Date.now().toString(36)}`)
  await page.getByLabel('Outcome measure').selectOption('eviction_filing_rate')
  await page.getByLabel(/Treated jurisdictions/).fill(adopters.map(a => a[0]).join(', '))
  await page.getByText('A different start for each treated jurisdiction').click()
  for (const [code, start] of adopters) await page.locator(`#st-start-${code}`).fill(start)
  await page.getByRole('button', { name: 'Create study' }).click()
  await expect(page).toHaveURL(/\/studies\/\d+\/pool$/)

  await page.getByTestId('study-steps').getByRole('link', { name: 'Estimates' }).click()
  await expect(page.getByLabel('Design')).toHaveValue('staggered')
  await expect(page.getByTestId('staggered-why')).toContainText('adopt at different times')
  await page.getByTestId('run-button').click()
  const card = page.getByTestId('latest-estimate')
  await expect(card.getByTestId('estimate-value')).toHaveText(/^-?\d/, { timeout: 90_000 })
  await expect(card.getByTestId('event-time-chart').locator('canvas')).toBeVisible()
  await expect(card.getByTestId('group-time-chart').locator('canvas')).toBeVisible()
  await snap(page, 'staggered-estimates')

  await page.getByLabel('Design').selectOption('did')
  await page.getByTestId('run-button').click()
  await expect(card).toContainText('Difference-in-differences', { timeout: 60_000 })
  await expect(card.getByTestId('decomposition-chart').locator('canvas')).toBeVisible()
  await snap(page, 'staggered-decomposition')
})
