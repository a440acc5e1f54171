/**
 * Delivery as people do it: the analyst downloads the estimates workbook from the browser and
 * opens the printable report; then the analyst requests review, the reviewer (a second user,
 * signed in in a browser of their own) comments and approves, the study locks, and the
 * analyst starts a new version.
 */
import { readFile } from 'node:fs/promises'
import ExcelJS from 'exceljs'
import { expect, test } from '@playwright/test'
import { signInAs, snap } from './support/auth'
import { type StudyFixture, studyWithRuns } from '../tests/support/studyFixture'
import { waitForMail } from '../tests/support/mail'

let f: StudyFixture
let title: string

test.beforeAll(async () => {
  f = await studyWithRuns({ question: 'Did the helmet rule lower road deaths in the treated county?' })
  title = (await f.analyst.get(`/api/studies/${f.studyId}`)).body.title
})

test('the analyst exports the workbook from the browser', async ({ page }) => {
  await signInAs(page, 'analyst')
  await page.goto(`/studies/${f.studyId}/review`)
  const row = page.getByTestId('runs-table').locator(`tr[data-run="${f.runs.did.id}"]`)
  const [download] = await Promise.all([page.waitForEvent('download'), row.getByTestId('workbook-link').click()])
  expect(download.suggestedFilename()).toMatch(/-v1-run\d+-estimates\.xlsx$/)
  const wb = new ExcelJS.Workbook()
  await wb.xlsx.readFile(await download.path())
  expect(wb.worksheets.map(w => w.name)).toContain('Panel rows')
  const summary = wb.getWorksheet('Summary')!
  let estimate: unknown
  summary.eachRow((r) => {
    if (r.getCell(1).value === 'Effect estimate') estimate = r.getCell(2).value
  })
  expect(estimate).toBe(f.runs.did.result.effect.estimate)
  await snap(page, 'delivery-runs-to-deliver')
})

test('the analyst opens the printable report', async ({ page }) => {
  await signInAs(page, 'analyst')
  await page.goto(`/studies/${f.studyId}/review`)
  await page.getByTestId('runs-table').locator(`tr[data-run="${f.runs.event.id}"]`).getByTestId('open-report').click()
  const report = page.getByTestId('report')
  await expect(report.getByTestId('report-question')).toHaveText('Did the helmet rule lower road deaths in the treated county?')
  await expect(report.getByTestId('effect-estimate')).toHaveText(f.runs.event.result.effect.estimate.toFixed(4).replace(/^-/, '−'))
  await expect(report.getByTestId('cautions')).toContainText('observational estimates')
  await expect(report.getByTestId('not-approved')).toBeVisible()
  await expect(report.getByTestId('event-table').getByRole('row')).toHaveCount(f.runs.event.result.eventStudy.length + 1)
  await expect(report.getByTestId('validity-table').getByRole('row')).toHaveCount(8)
  await expect(report.locator('canvas')).toHaveCount(2)
  const [csv] = await Promise.all([page.waitForEvent('download'), report.getByTestId('coefficients-csv').click()])
  expect(csv.suggestedFilename()).toBe(`study${f.studyId}-run${f.runs.event.id}-coefficients.csv`)
  const [eventCsv] = await Promise.all([page.waitForEvent('download'), report.getByTestId('event-csv').click()])
  const lines = (await readFile(await eventCsv.path(), 'utf8')).trim().split('\r\n')
  expect(lines[0]).toBe('Periods from start,Estimate,Standard error,95% low,95% high,Reference period,Binned end point')
  expect(lines).toHaveLength(f.runs.event.result.eventStudy.length + 1)
  expect(Number(lines[1]!.split(',')[1])).toBe(f.runs.event.result.eventStudy[0].estimate)
  const [png] = await Promise.all([page.waitForEvent('download'), report.getByTestId('chart-png').first().click()])
  expect(png.suggestedFilename()).toMatch(/trends\.png$/)
  await snap(page, 'delivery-report-screen')
  await page.emulateMedia({ media: 'print' })
  await expect(page.getByTestId('report-toolbar')).toBeHidden()
  await expect(report.getByTestId('chart-png').first()).toBeHidden()
  await snap(page, 'delivery-report-print')
})

test('the analyst records threats to validity with evidence', async ({ page }) => {
  await signInAs(page, 'analyst')
  await page.goto(`/studies/${f.studyId}/validity`)
  const history = page.getByTestId('threat-history')
  await history.getByText('Partly addressed').click()
  await history.getByLabel('Note').fill('A speed-camera programme started in 2008 in the treated county.')
  await history.getByRole('button', { name: 'Link evidence' }).click()
  await history.getByLabel('Run').selectOption(String(f.runs.event.id))
  await history.getByLabel('What it shows').fill('leads near zero')
  await page.getByTestId('threat-diffusion').getByText('Addressed', { exact: true }).click()
  await page.getByTestId('save-validity').click()
  await expect(page.getByRole('status')).toContainText('Saved 2 of 7 threats')
  await page.reload()
  await expect(page.getByTestId('threat-history').getByLabel('Note')).toHaveValue('A speed-camera programme started in 2008 in the treated county.')
  await snap(page, 'delivery-validity')
  await page.goto(`/studies/${f.studyId}/runs/${f.runs.event.id}/report`)
  await expect(page.getByTestId('validity-table').locator('tr[data-threat="history"]')).toContainText('Partly addressed')
})

test('request review as the analyst, approve as the reviewer, then start a new version', async ({ page, browser }) => {
  await signInAs(page, 'analyst')
  await page.goto(`/studies/${f.studyId}/review`)
  await expect(page.getByTestId('study-status')).toHaveText('Draft')
  const reviewerSelect = page.getByLabel('Reviewer', { exact: true })
  const option = reviewerSelect.locator('option', { hasText: 'reviewer@counterpart.test' })
  await reviewerSelect.selectOption((await option.getAttribute('value'))!)
  await page.getByLabel('Note for the reviewer (optional)').fill('Ready for the budget memo.')
  await page.getByTestId('request-review').click()
  await expect(page.getByTestId('review-message')).toContainText('reviewer@counterpart.test has been e-mailed')
  await expect(page.getByTestId('study-status')).toHaveText('In review')
  await expect(page.getByTestId('approve')).toHaveCount(0)
  const mail = await waitForMail(m => m.to === 'reviewer@counterpart.test' && m.subject === `Review requested: ${title}`)
  const link = mail.text.split('\n').find(l => l.includes(`/studies/${f.studyId}/review`))!.trim()

  const reviewerContext = await browser.newContext()
  const rp = await reviewerContext.newPage()
  await signInAs(rp, 'reviewer')
  await rp.goto(new URL(link).pathname)
  await expect(rp.getByTestId('study-status')).toHaveText('In review')
  await rp.getByLabel('Add a comment').fill('Checked the pool and the leads; fine.')
  await rp.getByTestId('send-comment').click()
  await expect(rp.getByTestId('comment').last()).toContainText('Checked the pool and the leads; fine.')
  await rp.getByTestId('approve').click()
  await expect(rp.getByTestId('study-status')).toHaveText('Approved')
  await expect(rp.getByTestId('review-message')).toContainText('analyst@counterpart.test has been e-mailed')
  await snap(rp, 'delivery-reviewer-approved')
  await reviewerContext.close()

  await waitForMail(m => m.to === 'analyst@counterpart.test' && m.subject === `Approved: ${title}`)
  await page.reload()
  await expect(page.getByTestId('study-status')).toHaveText('Approved')
  await page.goto(`/studies/${f.studyId}/runs/${f.runs.did.id}/report`)
  await expect(page.getByTestId('approved-by')).toContainText('reviewer@counterpart.test')
  await page.goto(`/studies/${f.studyId}/validity`)
  await expect(page.getByText('approved and locked')).toBeVisible()
  await expect(page.getByTestId('save-validity')).toHaveCount(0)
  await page.goto(`/studies/${f.studyId}/review`)
  await page.getByTestId('new-version').click()
  await expect(page).toHaveURL(/\/studies\/\d+$/)
  expect(Number(page.url().split('/').pop())).not.toBe(f.studyId)
  await snap(page, 'delivery-new-version')
})

test('an admin finds the review steps in the audit log', async ({ page }) => {
  await signInAs(page, 'admin')
  await page.getByTestId('nav').getByRole('link', { name: 'Audit log' }).click()
  await expect(page.getByRole('heading', { name: 'Audit log', level: 1 })).toBeVisible()
  await page.getByLabel('Record kind').selectOption('study')
  await page.getByLabel('Record id').fill(String(f.studyId))
  await page.getByLabel('Action').fill('review')
  await page.getByRole('button', { name: 'Filter' }).click()
  const rows = page.getByTestId('audit-row')
  await expect(rows).toHaveCount(2)
  await expect(rows.first()).toContainText('review.approve')
  await expect(rows.first()).toContainText('reviewer@counterpart.test')
  await rows.first().getByText('field(s)').click()
  await expect(rows.first()).toContainText('approved')
  await snap(page, 'delivery-audit-log')
})
