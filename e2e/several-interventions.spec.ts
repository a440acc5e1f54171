import ExcelJS from 'exceljs'
import { expect, test } from '@playwright/test'
import { gotoHydrated, signInAs, snap } from './support/auth'

/**
 * One adopter, two interventions, against a comparison: the analyst picks the adoption and the
 * strengthening from the registry, runs the interrupted time series against the weighted
 * comparison, sees each intervention's change under its own label and date with the placebo
 * distribution, and exports the workbook with both labelled.
 */
test('an analyst estimates each intervention against the weighted comparison and exports them labelled', async ({ page }) => {
  test.setTimeout(120_000)
  const title = `Mediation and its extension ${Date.now().toString(36)}`
  await signInAs(page, 'analyst')
  await gotoHydrated(page, '/studies/new')
  await page.getByLabel('Title').fill(title)
  await page.getByLabel('Outcome measure').selectOption('eviction_filing_rate')
  await page.getByLabel('Treated jurisdictions').fill('VM-BR-04')
  const events = page.getByTestId('registry-events')
  await expect(events).toContainText('2020-01')
  await events.getByRole('checkbox').nth(0).check()
  await events.getByRole('checkbox').nth(1).check()
  await expect(page.getByLabel('First treated period')).toHaveValue('2017-07')
  await page.getByRole('button', { name: 'Create study' }).click()
  await expect(page).toHaveURL(/\/studies\/\d+\/pool$/)

  await page.getByTestId('study-steps').getByRole('link', { name: 'Estimates' }).click()
  await page.getByLabel('Design').selectOption('its')
  await expect(page.getByTestId('run-its-comparison')).toHaveValue('synthetic')
  await expect(page.getByTestId('run-interventions')).toHaveValue('each')
  await page.getByTestId('run-button').click()
  const card = page.getByTestId('latest-estimate')
  await expect(card.getByTestId('estimate-value')).toHaveText(/^-?\d/, { timeout: 60_000 })
  await expect(card.getByTestId('inference-reason')).toContainText('comparison series')
  const terms = card.getByTestId('intervention-terms')
  await expect(terms).toContainText('Mediation before an eviction filing (2017-07): change in level')
  await expect(terms).toContainText('Mediation extended to arrears under three months (2020-01): change in level')
  await expect(terms).not.toContainText('level_2')
  await expect(card.getByTestId('placebo-chart').locator('canvas')).toBeVisible()
  await expect(card.getByTestId('gap-paths').locator('canvas')).toBeVisible()
  // the placebo units' paths are read apart from the run, when the chart is shown
  await expect(card.getByTestId('gap-paths')).toHaveAttribute('data-placebo-paths', /^[1-9]\d*$/)
  await expect(card.getByTestId('its-fit').locator('canvas')).toBeVisible()
  await expect(card.getByTestId('residual-acf')).toContainText('Newey-West')
  await expect(card.getByTestId('synthetic-weights')).toContainText(/VM-[A-Z]{2}-\d{2} 0\.\d/)
  await snap(page, 'several-interventions-estimates')

  const [download] = await Promise.all([page.waitForEvent('download'), card.getByTestId('run-workbook').click()])
  const wb = new ExcelJS.Workbook()
  await wb.xlsx.readFile(await download.path())
  const meanings: string[] = []
  wb.getWorksheet('Coefficients')!.eachRow((row) => meanings.push(String(row.getCell(2).value ?? '')))
  expect(meanings).toContain('Mediation before an eviction filing (2017-07): change in level')
  expect(meanings).toContain('Mediation extended to arrears under three months (2020-01): change in level')
  const inference: string[] = []
  wb.getWorksheet('Inference')!.eachRow((row) => inference.push(String(row.getCell(1).value ?? '')))
  expect(inference).toContain('Method')
  expect(inference.some(t => t.startsWith('Mediation extended to arrears under three months (2020-01)'))).toBe(true)
})
