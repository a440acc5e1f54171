import { expect, test } from '@playwright/test'
import { signInAs, signOut, snap } from './support/auth'

const expectedNav = {
  admin: { shows: ['Overview', 'People & access', 'Mail outbox'], hides: [] as string[] },
  analyst: { shows: ['Overview'], hides: ['People & access', 'Mail outbox'] },
  reviewer: { shows: ['Overview'], hides: ['People & access', 'Mail outbox'] },
} as const

test('a signed-out visitor is sent to the sign-in page', async ({ page }) => {
  await page.goto('/admin/users')
  await expect(page).toHaveURL(/\/login/)
  await expect(page.getByRole('heading', { name: 'Sign in' })).toBeVisible()
})

for (const role of ['admin', 'analyst', 'reviewer'] as const) {
  test(`${role} signs in, sees the right navigation and signs out`, async ({ page }) => {
    await signInAs(page, role)
    await expect(page.getByTestId('user-role')).toHaveText({ admin: 'Administrator', analyst: 'Analyst', reviewer: 'Reviewer' }[role])
    const nav = page.getByTestId('nav')
    for (const label of expectedNav[role].shows) await expect(nav.getByRole('link', { name: label })).toBeVisible()
    for (const label of expectedNav[role].hides) await expect(nav.getByRole('link', { name: label })).toHaveCount(0)
    await snap(page, `overview-${role}`)
    await signOut(page)
    await page.goto('/')
    await expect(page).toHaveURL(/\/login/)
  })
}

test('a reviewer opening an admin page gets a refusal screen', async ({ page }) => {
  await signInAs(page, 'reviewer')
  await page.goto('/admin/users')
  const screen = page.getByTestId('error-screen')
  await expect(screen).toBeVisible()
  await expect(screen).toHaveAttribute('data-status', '403')
  await expect(screen).toContainText('Not available to your role')
  await snap(page, 'refusal-reviewer')
})

test('a wrong password shows a clear message', async ({ page }) => {
  await page.goto('/login')
  await page.getByLabel('E-mail').fill('analyst@counterpart.test')
  await page.getByLabel('Password').fill('not-the-password')
  await page.getByRole('button', { name: 'Sign in' }).click()
  await expect(page.getByTestId('login-error')).toContainText('do not match')
})
