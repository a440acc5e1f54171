import { expect, test } from '@playwright/test'
import { signInAs, signInWith, signOut, snap } from './support/auth'

const catcher = process.env.MAIL_CATCHER_URL ?? 'http://127.0.0.1:2581'

test('an admin invites a colleague; the mail arrives and its link sets a working password', async ({ page, request }) => {
  const email = `invitee-${Date.now()}@counterpart.test`
  await signInAs(page, 'admin')
  await page.getByTestId('nav').getByRole('link', { name: 'People & access' }).click()
  const form = page.getByTestId('invite-form')
  await form.getByLabel('Name').fill('Ivo Invitee')
  await form.getByLabel('E-mail').fill(email)
  await form.getByLabel('Role').selectOption('reviewer')
  await form.getByRole('button', { name: 'Send invitation' }).click()
  await expect(page.getByRole('status')).toContainText(`Invitation sent to ${email}`)

  let link = ''
  await expect.poll(async () => {
    const messages = await (await request.get(`${catcher}/messages`)).json() as { to: string, text: string }[]
    const mail = messages.find(m => m.to === email)
    link = mail?.text.match(/https?:\/\/\S+\/invite\/[\w-]+/)?.[0] ?? ''
    return link
  }).not.toBe('')

  await page.goto('/admin/outbox')
  await expect(page.getByTestId('caught-mail').filter({ hasText: email }).first()).toBeVisible()
  await snap(page, 'outbox')
  await signOut(page)

  await page.goto(new URL(link).pathname)
  await expect(page.getByRole('heading', { name: 'Welcome, Ivo Invitee' })).toBeVisible()
  await page.getByLabel('New password').fill('a-long-new-password')
  await page.getByLabel('Repeat it').fill('a-long-new-password')
  await page.getByRole('button', { name: 'Set password' }).click()
  await expect(page.getByRole('heading', { name: 'Your account is ready' })).toBeVisible()
  await snap(page, 'invitation-accepted')

  await signInWith(page, email, 'a-long-new-password')
  await expect(page.getByTestId('user-role')).toHaveText('Reviewer')
})
