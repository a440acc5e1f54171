import { expect, type Page, test } from '@playwright/test'
import { type StudyFixture, studyWithRuns } from '../tests/support/studyFixture'
import { signInAs, snap } from './support/auth'

/**
 * The workspace at a laptop's 1024 px and a desktop's 1440 px: the pool table keeps the
 * jurisdiction column in view and the Flags column reachable; a run card's links open the
 * report and download the workbook; an estimate can be run with the keyboard alone, from the
 * skip link to the new run card; the Trends step hydrates without warnings; the studies list's
 * filters live in the address; the Trends step refits a chosen event window.
 * On the invented study of tests/support/studyFixture.ts.
 */
let f: StudyFixture

test.beforeAll(async () => {
  f = await studyWithRuns({ title: `Layout check ${Date.now().toString(36)}` })
})

/** Presses Tab until the focused element matches `test` (data-test value); fails after `limit` presses. */
async function tabTo(page: Page, testId: string, limit = 80): Promise<void> {
  for (let i = 0; i < limit; i++) {
    await page.keyboard.press('Tab')
    if (await page.evaluate(id => document.activeElement?.getAttribute('data-test') === id, testId)) return
  }
  throw new Error(`Tab did not reach [data-test=${testId}] in ${limit} presses`)
}

for (const width of [1024, 1440]) {
  test(`pool table at ${width} px: the jurisdiction stays in view and Flags can be reached`, async ({ page }) => {
    await page.setViewportSize({ width, height: 900 })
    await signInAs(page, 'analyst')
    await page.goto(`/studies/${f.studyId}/pool`)
    const scroller = page.getByTestId('pool-scroll')
    const name = page.getByTestId('pool-table').locator('thead th').nth(1)
    const flags = page.getByTestId('pool-table').locator('thead th').last()
    await expect(name).toContainText('Jurisdiction')
    await expect(flags).toContainText('Flags')
    await expect(name).toBeInViewport()
    const before = await name.boundingBox()
    // scroll the table sideways as far as it goes: Flags comes into view, the name column stays put
    await scroller.evaluate((el) => { el.scrollLeft = el.scrollWidth })
    await expect(flags).toBeInViewport()
    const box = (await flags.boundingBox())!
    expect(box.x + box.width).toBeLessThanOrEqual(width)
    const after = await name.boundingBox()
    expect(after!.x).toBeCloseTo(before!.x, 0)
    await expect(name).toBeInViewport()
    // the s badge and the legend that explains it
    await expect(page.getByTestId('rank-legend')).toContainText('in the suggested pool')
    // the page itself never scrolls sideways
    expect(await page.evaluate(() => document.documentElement.scrollWidth <= window.innerWidth)).toBe(true)
    await snap(page, `layout-pool-${width}`)
  })
}

test('a run card links to its report and its workbook', async ({ page }) => {
  await page.setViewportSize({ width: 1024, height: 900 })
  await signInAs(page, 'analyst')
  await page.goto(`/studies/${f.studyId}/estimates`)
  const card = page.getByTestId('latest-estimate')
  await expect(card).toContainText(`Run #${f.runs.event.id}`)
  await expect(card.getByTestId('run-facts')).toContainText('Compared with')
  const download = page.waitForEvent('download')
  await card.getByTestId('run-workbook').click()
  expect((await download).suggestedFilename()).toMatch(/-run\d+-estimates\.xlsx$/)
  await card.getByTestId('run-report').click()
  await expect(page).toHaveURL(new RegExp(`/studies/${f.studyId}/runs/${f.runs.event.id}/report$`))
  await expect(page.getByTestId('report')).toBeVisible()
  await page.goto(`/studies/${f.studyId}`)
  const studyBook = page.waitForEvent('download')
  await page.getByTestId('study-workbook').click()
  expect((await studyBook).suggestedFilename()).toMatch(/-all-runs\.xlsx$/)
})

test('an estimate runs with the keyboard alone, from the skip link to the new run card', async ({ page }) => {
  await page.setViewportSize({ width: 1440, height: 900 })
  await signInAs(page, 'analyst')
  await page.goto(`/studies/${f.studyId}/estimates`)
  await expect(page.getByTestId('run-button')).toBeVisible()
  const before = await page.getByTestId('latest-estimate').locator('h2').innerText()

  await page.keyboard.press('Tab')
  const skip = page.getByTestId('skip-link')
  await expect(skip).toBeFocused()
  await expect(skip).toBeInViewport()
  await page.keyboard.press('Enter')
  await expect(page.locator('#main-content')).toBeFocused()

  await tabTo(page, 'run-button')
  // the focused control shows a ring
  expect(await page.evaluate(() => getComputedStyle(document.activeElement!).outlineStyle)).not.toBe('none')
  await page.keyboard.press('Enter')
  await expect(page.getByTestId('latest-estimate').locator('h2')).not.toHaveText(before)
  await tabTo(page, 'run-report')
  await page.keyboard.press('Enter')
  await expect(page).toHaveURL(/\/runs\/\d+\/report$/)
  await expect(page.getByTestId('report')).toBeVisible()
  await snap(page, 'layout-keyboard-report')
})

test('the Trends step hydrates without warnings', async ({ page }) => {
  const warnings: string[] = []
  page.on('console', (m) => {
    if (/hydrat|mismatch/i.test(m.text())) warnings.push(`${m.type()}: ${m.text()}`)
  })
  await page.setViewportSize({ width: 1440, height: 900 })
  await signInAs(page, 'analyst')
  await page.goto(`/studies/${f.studyId}/trends`)
  await expect(page.getByTestId('lead-test')).toBeVisible()
  await expect(page.getByTestId('event-window')).toBeVisible()
  await page.reload()
  await expect(page.getByTestId('lead-test')).toBeVisible()
  expect(warnings).toEqual([])
})

test('the studies list filters by outcome and owner, kept in the address; Trends refits a chosen event window', async ({ page }) => {
  await page.setViewportSize({ width: 1024, height: 900 })
  await signInAs(page, 'reviewer')
  await page.goto('/studies')
  await page.getByTestId('outcome-filter').selectOption(f.outcome)
  await expect(page).toHaveURL(new RegExp(`outcome=${f.outcome}`))
  const rows = page.getByTestId('studies-table').locator('tbody tr[data-study]')
  await expect(rows.first()).toBeVisible()
  for (const text of await rows.locator('td:nth-child(4)').allInnerTexts()) expect(text).toContain(f.outcome)
  await page.getByTestId('owner-filter').selectOption({ label: 'Noor Analyst' })
  await expect(page).toHaveURL(/owner=\d+/)
  await page.reload()
  await expect(page.getByTestId('outcome-filter')).toHaveValue(f.outcome)
  await expect(page.getByTestId('studies-table').locator(`tr[data-study="${f.studyId}"]`)).toBeVisible()

  await page.goto(`/studies/${f.studyId}/trends`)
  await expect(page.getByTestId('event-window')).toBeVisible()
  await page.getByTestId('event-from').fill('-3')
  await page.getByTestId('event-to').fill('2')
  const refit = page.waitForResponse(r => r.url().includes(`/api/studies/${f.studyId}/trends?`) && r.url().includes('from=-3'))
  await page.getByTestId('event-window-apply').click()
  expect((await refit).status()).toBe(200)
  await expect(page.getByTestId('event-from')).toHaveValue('-3')
  await expect(page.getByRole('button', { name: 'Window from the data' })).toBeVisible()
})
