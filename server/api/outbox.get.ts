/**
 * GET /api/outbox — admin: the mails the application sent, and, where a local mail catcher is
 * configured (development and tests), the messages it caught.
 */
import { desc } from 'drizzle-orm'
import { mailOutbox } from '~~/db/schema'

interface CaughtMail { id: string, to: string, subject: string, text: string, date: string }

export default defineEventHandler(async (event) => {
  await requireUser(event, ADMIN)
  const sent = await useDb().select().from(mailOutbox).orderBy(desc(mailOutbox.createdAt)).limit(100)
  let caught: CaughtMail[] | null = null
  const catcher = process.env.MAIL_CATCHER_URL || useRuntimeConfig().mailCatcherUrl
  if (catcher) {
    caught = await $fetch<CaughtMail[]>(`${catcher}/messages`, { timeout: 2000 }).catch(() => null)
  }
  return { sent, caught }
})
