/**
 * The Robustness step as people use it, on the seeded demo scenario: the analyst runs the
 * checks of a difference-in-differences run in one click, watches them progress and reads the
 * charts and findings; the reviewer finds the record on the Review step before deciding.
 */
import { expect, test } from '@playwright/test'
import { signInAs, snap } from './support/auth'
import { as } from '../tests/support/http'
import { demoStudyWithRun } from '../tests/support/demoStudy'

let studyId: number

test.beforeAll(async () => {
  const analyst = await as('analyst')
  studyId = (await demoStudyWithRun(analyst, `Mediation robustness ${Date.now().toString(36)}`)).studyId
})

test('the analyst runs the robustness checks and reads the charts', async ({ page }) => {
  await signInAs(page, 'analyst')
  await page.goto(`/studies/${studyId}/estimates`)
  const steps = page.getByTestId('study-steps').getByRole('link')
  await expect(steps).toContainText(['Setup', 'Pool', 'Trends', 'Estimates', 'Robustness', 'Validity', 'Review'])
  await steps.filter({ hasText: 'Robustness' }).click()
  await expect(page.getByTestId('no-checks')).toBeVisible()
  await page.getByTestId('run-robustness').click()

  const status = page.getByTestId('robustness-status')
  await expect(status.getByRole('listitem')).toHaveCount(4)
  await expect(status.getByRole('progressbar')).toHaveCount(4)
  for (const kind of ['placebo_time', 'placebo_space', 'leave_one_out', 'pools']) {
    await expect(status.locator(`li[data-kind="${kind}"]`)).toHaveAttribute('data-status', 'done', { timeout: 60_000 })
  }
  await expect(status.getByRole('progressbar').first()).toHaveAttribute('aria-valuenow', '100')

  const time = page.getByTestId('result-placebo_time')
  await expect(time.getByTestId('finding')).toContainText(/fake start dates in the pre-period \(at least 3 periods from either end\)/)
  await expect(time.getByTestId('forest')).toBeVisible()
  await expect(page.getByTestId('result-placebo_space').getByTestId('placebo-chart')).toBeVisible()
  await expect(page.getByTestId('result-placebo_space').getByTestId('finding')).toContainText('20 comparison jurisdictions each played the treated one')
  await expect(page.getByTestId('result-leave_one_out').getByTestId('finding')).toContainText('it moves most without VM-')
  const pools = page.getByTestId('pools-table')
  await expect(pools.locator('tr[data-pool]')).toHaveCount(4)
  await expect(pools.locator('tr[data-pool="weighted"]')).toContainText('weighted comparison')
  await expect(page.getByTestId('robustness-cautions')).toContainText('qualified evaluator')
  await expect(page.getByTestId('robustness-record').locator('tbody tr')).toHaveCount(4)
  await snap(page, 'robustness-step')
})

test('the reviewer sees the robustness record on the Review step', async ({ page }) => {
  await signInAs(page, 'reviewer')
  await page.goto(`/studies/${studyId}/review`)
  const summary = page.getByTestId('robustness-summary')
  await expect(summary.locator('tr[data-kind]')).toHaveCount(4)
  await expect(summary.locator('tr[data-kind="leave_one_out"]')).toContainText('Leaving out one comparison jurisdiction at a time')
  await expect(summary.getByTestId('older-run')).toHaveCount(0)
  await snap(page, 'robustness-review')
  await summary.getByRole('link', { name: 'Open the Robustness step' }).click()
  await expect(page.getByTestId('result-pools')).toBeVisible()
  await expect(page.getByTestId('run-robustness')).toHaveCount(0)
})
