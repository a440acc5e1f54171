/** Reading the test mail catcher: the messages that arrived, waiting briefly for one to come. */
export const MAIL_CATCHER_URL = process.env.MAIL_CATCHER_URL ?? 'http://127.0.0.1:2581'

export interface CaughtMail { to: string, subject: string, text: string }

export async function caughtMails(): Promise<CaughtMail[]> {
  return await (await fetch(`${MAIL_CATCHER_URL}/messages`)).json() as CaughtMail[]
}

/** The first caught mail matching, polling up to `timeoutMs` (SMTP delivery is quick but not instant). */
export async function waitForMail(match: (m: CaughtMail) => boolean, timeoutMs = 5000): Promise<CaughtMail> {
  const start = Date.now()
  for (;;) {
    const found = (await caughtMails()).find(match)
    if (found) return found
    if (Date.now() - start > timeoutMs) throw new Error('no matching mail arrived at the mail catcher')
    await new Promise(r => setTimeout(r, 100))
  }
}
