/**
 * A local mail catcher for development and tests: an SMTP server on loopback that keeps every
 * message it receives, and a small HTTP API beside it:
 *   GET /messages  -> [{id, from, to, subject, text, date}] newest first
 *   DELETE /messages -> empties the box
 * Nothing leaves the machine. Ports: SMTP_PORT (2525), HTTP_PORT (2580).
 */
import { createServer } from 'node:http'
import { mkdirSync, readFileSync, writeFileSync, existsSync } from 'node:fs'
import { dirname } from 'node:path'
import { simpleParser } from 'mailparser'
import { SMTPServer } from 'smtp-server'

interface Caught { id: string, from: string, to: string, subject: string, text: string, date: string }

const smtpPort = Number(process.env.SMTP_PORT ?? 2525)
const httpPort = Number(process.env.HTTP_PORT ?? 2580)
const store = process.env.MAIL_STORE ?? '.data/mail/messages.json'

let box: Caught[] = existsSync(store) ? JSON.parse(readFileSync(store, 'utf8')) as Caught[] : []
function persist() {
  mkdirSync(dirname(store), { recursive: true })
  writeFileSync(store, JSON.stringify(box))
}

const smtp = new SMTPServer({
  authOptional: true,
  disabledCommands: ['STARTTLS', 'AUTH'],
  logger: false,
  onData(stream, session, callback) {
    simpleParser(stream).then((mail) => {
      const to = session.envelope.rcptTo.map(r => r.address).join(', ')
      box.unshift({
        id: `${Date.now()}-${box.length + 1}`,
        from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
        to,
        subject: mail.subject ?? '',
        text: mail.text ?? '',
        date: new Date().toISOString(),
      })
      box = box.slice(0, 500)
      persist()
      callback()
    }).catch(err => callback(err))
  },
})

const http = createServer((req, res) => {
  if (req.url?.startsWith('/messages')) {
    if (req.method === 'DELETE') {
      box = []
      persist()
      res.writeHead(204).end()
      return
    }
    res.writeHead(200, { 'content-type': 'application/json' }).end(JSON.stringify(box))
    return
  }
  res.writeHead(404).end()
})

smtp.listen(smtpPort, '127.0.0.1', () => {
  http.listen(httpPort, '127.0.0.1', () => {
    console.log(`mail catcher: SMTP on 127.0.0.1:${smtpPort}, messages at http://127.0.0.1:${httpPort}/messages`)
  })
})

for (const signal of ['SIGINT', 'SIGTERM'] as const) {
  process.on(signal, () => {
    smtp.close(() => http.close(() => process.exit(0)))
  })
}
