import { expect, test } from '@playwright/test'
import { as } from '../tests/support/http'
import { ADOPTED, FIRST_ADOPTER, OUTCOME } from '../db/seed/demoScenario'
import { signInAs, snap } from './support/auth'

/**
 * The Validity step on a demo study: beside every threat the computed evidence shows a
 * verdict in plain words, its figure and a link to the chart behind it, under a note that the
 * evidence is a starting point and the analyst writes the assessment. A reviewer reads it.
 */
test('the Validity step shows a computed verdict beside every threat', async ({ page }) => {
  const analyst = await as('analyst')
  const created = await analyst.post('/api/studies', {
    title: `Evidence in the browser ${Date.now().toString(36)}`,
    question: 'Did mediation before filing lower eviction filings in the first adopter?',
    outcome: OUTCOME,
    treated: [FIRST_ADOPTER],
    start: ADOPTED,
    window: { pre: ['2012-01', '2017-06'], post: ['2017-07', '2019-12'] },
  })
  expect(created.status, JSON.stringify(created.body)).toBe(201)
  const its = await analyst.post(`/api/studies/${created.body.id}/runs`, { design: 'its' })
  expect(its.status, JSON.stringify(its.body)).toBe(201)

  await signInAs(page, 'reviewer')
  await page.goto(`/studies/${created.body.id}/validity`)
  await expect(page.getByRole('heading', { name: 'Threats to validity' })).toBeVisible()
  await expect(page.getByTestId('evidence-note')).toContainText('starting point')
  await expect(page.getByTestId('evidence-note')).toContainText('analyst writes the assessment')
  for (const threat of ['history', 'maturation', 'testing', 'instrumentation', 'regression_to_mean', 'selection', 'diffusion']) {
    const box = page.getByTestId(`evidence-${threat}`)
    await expect(box.getByTestId('verdict'), threat).toHaveText(/^(supports the estimate|weakens the estimate|cannot tell)$/)
    await expect(box.getByTestId('figure'), threat).not.toBeEmpty()
    await expect(box.getByTestId('evidence-link'), threat).toHaveAttribute('href', new RegExp(`/studies/${created.body.id}/(trends|pool)#`))
  }
  await snap(page, 'validity-evidence')

  // the chart link leads to the anchored chart on the Trends step
  await page.getByTestId('evidence-history').getByTestId('evidence-link').click()
  await expect(page).toHaveURL(/\/trends#gap$/)
  await expect(page.locator('#gap')).toBeVisible()

  // the interrupted time series card draws the counterfactual band
  await page.goto(`/studies/${created.body.id}/estimates`)
  await expect(page.getByTestId('its-fit')).toBeVisible()
  await snap(page, 'its-counterfactual-band')
})

test('a count model\'s series can be read per 1,000 of its denominator, with the counterfactual band', async ({ page }) => {
  const analyst = await as('analyst')
  const created = await analyst.post('/api/studies', {
    title: `Filings as counts in the browser ${Date.now().toString(36)}`,
    outcome: 'eviction_filings', transform: 'rate', denominator: 'renter_households', treated: [FIRST_ADOPTER], start: ADOPTED,
  })
  expect(created.status, JSON.stringify(created.body)).toBe(201)
  const run = await analyst.post(`/api/studies/${created.body.id}/runs`, { design: 'its', options: { its: { family: 'quasipoisson', comparison: 'none' } } })
  expect(run.status, JSON.stringify(run.body)).toBe(201)
  const first = run.body.result.itsSeries[0]
  expect(first.counterfactualLow).toBeLessThan(first.counterfactual)
  expect(first.counterfactualHigh).toBeGreaterThan(first.counterfactual)

  await signInAs(page, 'analyst')
  await page.goto(`/studies/${created.body.id}/estimates`)
  const scale = page.getByTestId('its-scale')
  await expect(scale).toBeVisible()
  await scale.selectOption({ label: 'Per 1,000' })
  await expect(scale).toHaveValue('1000')
  await snap(page, 'its-count-per-1000')
})
