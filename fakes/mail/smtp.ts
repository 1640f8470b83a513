import { simpleParser, type AddressObject, type EmailAddress } from 'mailparser'
import { SMTPServer } from 'smtp-server'
import type { MailStore } from './store'

const MAX_MESSAGE_BYTES = 10 * 1024 * 1024

/** An SMTP server that accepts any sender, recipient and login, and keeps what it receives in `store`. */
export function createSmtpServer(store: MailStore, log: (line: string) => void): SMTPServer {
  return new SMTPServer({
    authOptional: true,
    // Accept AUTH without TLS: the app may be configured with a user and password even in development.
    allowInsecureAuth: true,
    disabledCommands: ['STARTTLS'],
    size: MAX_MESSAGE_BYTES,
    logger: false,
    // No reverse DNS for 127.0.0.1: there is no resolver to ask here, and it slows every connection.
    disableReverseLookup: true,
    banner: 'Kitwright local fake mail server',
    onAuth(auth, _session, callback) {
      callback(null, { user: auth.username ?? 'anyone' })
    },
    onData(stream, session, callback) {
      simpleParser(stream)
        .then((parsed) => {
          if ((stream as unknown as { sizeExceeded?: boolean }).sizeExceeded) {
            const err = Object.assign(new Error('Message too large for the fake mail server (10 MB).'), { responseCode: 552 })
            return callback(err)
          }
          const from = addresses(parsed.from)[0]
          const message = store.add({
            from: from?.address ?? (session.envelope.mailFrom ? session.envelope.mailFrom.address : ''),
            fromName: from?.name || null,
            to: addresses(parsed.to).map((a) => a.address!),
            cc: addresses(parsed.cc).map((a) => a.address!),
            envelopeTo: session.envelope.rcptTo.map((r) => r.address),
            subject: parsed.subject ?? '',
            text: parsed.text ?? '',
            html: typeof parsed.html === 'string' ? parsed.html : null,
            attachments: parsed.attachments.map((a) => ({
              filename: a.filename ?? 'attachment',
              contentType: a.contentType,
              size: a.size ?? a.content.length,
            })),
          }, parsed.attachments.map((a) => a.content))
          log(`mail "${message.subject}" to ${message.envelopeTo.join(', ')}`)
          callback()
        })
        .catch((err: unknown) => {
          log(`could not parse a message: ${err instanceof Error ? err.message : String(err)}`)
          callback(Object.assign(new Error('The fake mail server could not parse this message.'), { responseCode: 554 }))
        })
    },
  })
}

/** Flattens To/Cc/From headers (one or several, with groups) into plain addresses. */
function addresses(value: AddressObject | AddressObject[] | undefined): EmailAddress[] {
  if (!value) return []
  const out: EmailAddress[] = []
  const walk = (list: EmailAddress[]) => {
    for (const a of list) {
      if (a.group) walk(a.group)
      else if (a.address) out.push(a)
    }
  }
  for (const obj of Array.isArray(value) ? value : [value]) walk(obj.value)
  return out
}
