import nodemailer, { type Transporter } from 'nodemailer'

let transport: Transporter | undefined

/** Sends one e-mail through the configured SMTP relay (the fake inbox by default). */
export async function sendMail(msg: { to: string, subject: string, text: string, html?: string, attachments?: { filename: string, content: Buffer | string, contentType?: string }[] }) {
  const { smtp } = useRuntimeConfig()
  // A pool keeps a few SMTP connections open between messages, so a report or an order does not
  // wait for a new connection and greeting each time (nodemailer's own pooled transport).
  transport ??= nodemailer.createTransport({
    pool: true,
    maxConnections: 3,
    host: smtp.host,
    port: Number(smtp.port),
    secure: false,
    ignoreTLS: String(smtp.host) === '127.0.0.1' || String(smtp.host) === 'localhost',
    auth: smtp.user ? { user: smtp.user, pass: smtp.pass } : undefined,
  })
  await transport.sendMail({ from: smtp.from, ...msg })
}

/** Sends mail without failing the caller's request when the relay is down; the failure is logged. */
export async function sendMailQuietly(msg: Parameters<typeof sendMail>[0]) {
  try {
    await sendMail(msg)
  }
  catch (err) {
    console.error(`[mail] could not send "${msg.subject}" to ${msg.to}:`, (err as Error).message)
  }
}

export function appUrl(path: string) {
  return new URL(path, useRuntimeConfig().publicUrl).toString()
}
