/**
 * The data side as people use it: an admin adds a jurisdiction; an analyst uploads a CSV,
 * watches the progress bar reach done, and sees the series in the panel browser chart.
 */
import { expect, test } from '@playwright/test'
import { signInAs, signOut, snap } from './support/auth'

const tag = `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 5)}`

test('an admin adds a jurisdiction', async ({ page }) => {
  const code = `E2E-${tag.toUpperCase()}`
  await signInAs(page, 'admin')
  await page.getByTestId('nav').getByRole('link', { name: 'Jurisdictions' }).click()
  await expect(page.getByRole('heading', { name: 'Jurisdictions', level: 1 })).toBeVisible()
  const form = page.getByTestId('jurisdiction-form')
  await form.getByLabel('Code', { exact: true }).fill(code)
  await form.getByLabel('Name', { exact: true }).fill('Tarrowmede')
  await form.getByLabel('Region').fill('Brannvale')
  await form.getByLabel('Neighbours (codes, comma-separated)').fill('VM-BR-01')
  await form.getByLabel('Attributes (one name=value a line)').fill('population=4200')
  await form.getByRole('button', { name: 'Add jurisdiction' }).click()
  await expect(page.getByRole('status')).toContainText(`Added ${code}`)
  const table = page.getByTestId('jurisdictions-table')
  await table.getByTestId('table-filter').fill(code)
  await expect(table.getByRole('row').filter({ has: page.getByRole('cell', { name: code, exact: true }) })).toContainText('VM-BR-01')
  await snap(page, 'data-admin-adds-jurisdiction')
})

test('an admin sees a form error before anything is sent', async ({ page }) => {
  await signInAs(page, 'admin')
  await page.goto('/data/jurisdictions')
  const form = page.getByTestId('jurisdiction-form')
  await form.getByLabel('Code', { exact: true }).fill('has spaces')
  await form.getByRole('button', { name: 'Add jurisdiction' }).click()
  await expect(form.getByRole('alert').first()).toContainText('Codes use letters')
})

test('an analyst uploads a CSV, watches it import and sees the series in the panel browser', async ({ page }) => {
  const key = `e2e_${tag}`
  await signInAs(page, 'admin')
  const measure = await page.request.post('/api/measures', { data: { key, label: `Test filings ${tag}`, unit: 'filings', kind: 'outcome', frequency: 'month' } })
  expect(measure.status()).toBe(201)
  const source = await page.request.post('/api/sources', { data: { name: `Court returns ${tag}`, publisher: 'Demo court office' } })
  expect(source.status()).toBe(201)
  const { id } = await source.json()
  await signOut(page)

  await signInAs(page, 'analyst')
  await page.goto(`/data/sources/${id}`)
  const lines = [`code,month,${key}`]
  for (const code of ['VM-BR-01', 'VM-BR-02']) {
    for (let m = 1; m <= 24; m++) lines.push(`${code},${2022 + Math.floor((m - 1) / 12)}-${String(((m - 1) % 12) + 1).padStart(2, '0')},${(code.endsWith('1') ? 10 : 20) + Math.round(5 * Math.sin(m / 2))}`)
  }
  await page.getByTestId('upload-file').setInputFiles({ name: 'court-returns.csv', mimeType: 'text/csv', buffer: Buffer.from(lines.join('\n') + '\n') })
  await expect(page.getByTestId('preview-table')).toContainText('VM-BR-01')
  await expect(page.getByTestId(`map-${key}`)).toHaveValue(key)
  await page.getByTestId('check-rows').click()
  await expect(page.getByTestId('check-ok')).toContainText('48 values for 2 jurisdictions')
  await page.getByTestId('start-import').click()
  const progress = page.getByTestId('job-progress')
  await expect(progress).toHaveAttribute('data-state', 'done')
  await expect(progress.getByRole('progressbar')).toHaveAttribute('aria-valuenow', '100')
  await expect(page.getByTestId('import-outcome')).toContainText('Imported 48 values')
  await expect(page.getByTestId('releases-table')).toContainText('court-returns.csv')
  await snap(page, 'data-analyst-upload-done')

  await page.getByRole('link', { name: 'Open the panel browser' }).click()
  await page.getByTestId('panel-measure').selectOption(key)
  await page.getByTestId('panel-units').getByLabel(/VM-BR-01/).check()
  await page.getByTestId('panel-units').getByLabel(/VM-BR-02/).check()
  await expect(page.getByText('48 values')).toBeVisible()
  await expect(page.getByTestId('panel-chart').locator('canvas')).toBeVisible()
  await expect(page.getByTestId('panel-table')).toContainText('2023-12')
  await snap(page, 'data-panel-browser-chart')
})

test('a reviewer reads sources but gets no upload form', async ({ page }) => {
  await signInAs(page, 'reviewer')
  await page.getByTestId('nav').getByRole('link', { name: 'Sources & uploads' }).click()
  await page.getByTestId('sources-table').getByRole('link', { name: 'Demo statistical office' }).click()
  await expect(page.getByTestId('releases-table')).toContainText('Demo edition')
  await expect(page.getByTestId('upload')).toHaveCount(0)
})
