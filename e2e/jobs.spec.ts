/**
 * A long import can be stopped: the analyst starts one, presses Cancel on its progress bar,
 * and the bar ends "cancelled" with nothing imported; the same file can then be uploaded again.
 */
import { expect, test } from '@playwright/test'
import { signInAs, signOut, snap } from './support/auth'

const tag = `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 5)}`

test('an analyst cancels a running import from its progress bar', async ({ page }) => {
  test.setTimeout(120_000)
  const keys = [1, 2, 3, 4].map(i => `e2e_${tag}_${i}`)
  await signInAs(page, 'admin')
  for (const key of keys) {
    const measure = await page.request.post('/api/measures', { data: { key, label: `Test series ${key}`, unit: 'count', kind: 'outcome', frequency: 'month' } })
    expect(measure.status()).toBe(201)
  }
  const source = await page.request.post('/api/sources', { data: { name: `Long returns ${tag}`, publisher: 'Demo statistics office' } })
  const { id } = await source.json()
  const codes = ['BR', 'HO', 'SA', 'KE', 'OR', 'LU'].flatMap(r => Array.from({ length: 10 }, (_, i) => `VM-${r}-${String(i + 1).padStart(2, '0')}`))
  const lines = [`code,month,${keys.join(',')}`]
  for (const code of codes) {
    for (let m = 0; m < 1000; m++) lines.push(`${code},${1900 + Math.floor(m / 12)}-${String(m % 12 + 1).padStart(2, '0')},${m},${m + 1},${m + 2},${m + 3}`)
  }
  const file = { name: 'long-returns.csv', mimeType: 'text/csv', buffer: Buffer.from(`${lines.join('\n')}\n`) } // 240,000 values
  await signOut(page)

  await signInAs(page, 'analyst')
  await page.goto(`/data/sources/${id}`)
  await page.getByTestId('upload-file').setInputFiles(file)
  await expect(page.getByTestId(`map-${keys[0]}`)).toHaveValue(keys[0]!)
  await page.getByTestId('check-rows').click()
  await expect(page.getByTestId('check-ok')).toContainText('240,000 values')
  await page.getByTestId('start-import').click()
  const progress = page.getByTestId('job-progress')
  await progress.getByTestId('job-cancel').click()
  await expect(progress).toHaveAttribute('data-state', 'cancelled', { timeout: 30_000 })
  await expect(progress.getByTestId('job-cancel')).toHaveCount(0)
  await expect(page.getByTestId('import-outcome')).toContainText(/cancel/i)
  await snap(page, 'jobs-import-cancelled')
})
