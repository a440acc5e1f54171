/** Outgoing e-mail: nodemailer to the configured SMTP server (the local mail catcher in development). */
import { eq } from 'drizzle-orm'
import nodemailer, { type Transporter } from 'nodemailer'
import { mailOutbox } from '~~/db/schema'

let transport: Transporter | undefined

function useTransport(): Transporter {
  if (!transport) {
    const config = useRuntimeConfig()
    transport = nodemailer.createTransport({
      host: config.smtpHost,
      port: Number(config.smtpPort),
      secure: false,
      ignoreTLS: true,
    })
  }
  return transport
}

/** Records the mail in the outbox, sends it, and marks it sent (or keeps the error). */
export async function sendMail(message: { to: string, subject: string, text: string }): Promise<{ sent: boolean, error?: string }> {
  const db = useDb()
  const [row] = await db.insert(mailOutbox).values(message).returning({ id: mailOutbox.id })
  try {
    await useTransport().sendMail({ from: useRuntimeConfig().mailFrom, ...message })
    await db.update(mailOutbox).set({ sentAt: new Date() }).where(eq(mailOutbox.id, row!.id))
    return { sent: true }
  }
  catch (e) {
    const error = (e as Error).message
    await db.update(mailOutbox).set({ error }).where(eq(mailOutbox.id, row!.id))
    return { sent: false, error }
  }
}

/** The public address links in mails point at. */
export function publicOrigin(): string {
  return (process.env.PUBLIC_ORIGIN || useRuntimeConfig().publicOrigin).replace(/\/$/, '')
}
