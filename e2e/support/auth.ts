import { expect, type Page } from '@playwright/test'

export const DEMO_PASSWORD = 'counterpart-demo'
export type DemoRole = 'admin' | 'analyst' | 'reviewer'

/** Signs in through the sign-in form, as a person would, and waits for the overview. */
export async function signInAs(page: Page, role: DemoRole): Promise<void> {
  await signInWith(page, `${role}@counterpart.test`, DEMO_PASSWORD)
  await expect(page.getByTestId('user-menu')).toBeVisible()
}

export async function signInWith(page: Page, email: string, password: string): Promise<void> {
  await page.goto('/login')
  await page.getByLabel('E-mail').fill(email)
  await page.getByLabel('Password').fill(password)
  await page.getByRole('button', { name: 'Sign in' }).click()
}

export async function signOut(page: Page): Promise<void> {
  await page.getByTestId('user-menu').getByRole('button').first().click()
  await page.getByTestId('sign-out').click()
  await expect(page).toHaveURL(/\/login/)
}

/** Saves a named screenshot as a test artefact. */
export async function snap(page: Page, name: string): Promise<void> {
  await page.screenshot({ path: `test-results/screens/${name}.png`, fullPage: true })
}

/**
 * Opens a page and waits until Vue has hydrated it (Nuxt's isHydrating is false), so that what
 * the test types or selects next is not reset by hydration of the server-rendered form.
 */
export async function gotoHydrated(page: Page, path: string): Promise<void> {
  await page.goto(path)
  await page.waitForFunction(() => {
    const app = (document.getElementById('__nuxt') as unknown as { __vue_app__?: { config: { globalProperties: { $nuxt?: { isHydrating?: boolean } } } } } | null)?.__vue_app__
    return app?.config.globalProperties.$nuxt?.isHydrating === false
  })
}
