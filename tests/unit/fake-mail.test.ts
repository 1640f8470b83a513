// The fake mailbox is checked with the real mailer (nodemailer) over SMTP on loopback; nodemailer's own
// MIME encoding is the oracle for what the fake must read back.
import nodemailer, { type Transporter } from 'nodemailer'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { startFakeMail, type FakeMail, type MailMessage } from '../../fakes/mail/index'

let fake: FakeMail
let transport: Transporter

beforeAll(async () => {
  fake = await startFakeMail({ smtpPort: 0, httpPort: 0, maxMessages: 5 })
  transport = nodemailer.createTransport({ host: '127.0.0.1', port: fake.smtpPort, secure: false, ignoreTLS: true })
})

afterAll(async () => {
  transport?.close()
  await fake?.close()
})

beforeEach(async () => {
  await fetch(`${fake.url}/api/messages`, { method: 'DELETE' })
})

async function getJson<T>(path: string): Promise<{ status: number; body: T }> {
  const res = await fetch(`${fake.url}${path}`)
  return { status: res.status, body: (await res.json()) as T }
}

const PDF_BYTES = Buffer.from('%PDF-1.4\n% bag label for order 17\n%%EOF\n', 'latin1')

describe('fake mail server', () => {
  it('keeps text, HTML and an attachment and serves them back as JSON', async () => {
    await transport.sendMail({
      from: 'Kitwright <noreply@club.example>',
      to: 'Builder.One@Example.org',
      cc: 'organiser@example.org',
      subject: 'Your kit order 17 — paid',
      text: 'Thanks: order 17 is paid.\nSee you at the build day.',
      html: '<p>Thanks: <b>order 17</b> is paid.</p>',
      attachments: [{ filename: 'bag-label.pdf', content: PDF_BYTES, contentType: 'application/pdf' }],
    })

    const { status, body } = await getJson<MailMessage[]>('/api/messages?to=builder.one@example.org')
    expect(status).toBe(200)
    expect(body).toHaveLength(1)
    const m = body[0]!
    expect(m.from).toBe('noreply@club.example')
    expect(m.fromName).toBe('Kitwright')
    // nodemailer writes the domain in lower case (domains are case-insensitive, RFC 5321 §2.4); the local part stays.
    expect(m.to).toEqual(['Builder.One@example.org'])
    expect(m.cc).toEqual(['organiser@example.org'])
    expect(m.subject).toBe('Your kit order 17 — paid')
    expect(m.text.trim()).toBe('Thanks: order 17 is paid.\nSee you at the build day.')
    expect(m.html).toContain('<b>order 17</b>')
    expect(m.attachments).toEqual([{ filename: 'bag-label.pdf', contentType: 'application/pdf', size: PDF_BYTES.length }])
    expect(Number.isNaN(Date.parse(m.date))).toBe(false)

    const file = await fetch(`${fake.url}/api/messages/${m.id}/attachments/0`)
    expect(file.headers.get('content-type')).toBe('application/pdf')
    expect(Buffer.from(await file.arrayBuffer()).equals(PDF_BYTES)).toBe(true)
  })

  it('matches addresses without regard to case, including Cc and Bcc', async () => {
    await transport.sendMail({ from: 'a@club.example', to: 'x@example.org', bcc: 'Packer@Example.ORG', subject: 'one', text: '1' })
    expect((await getJson<MailMessage[]>('/api/messages?to=PACKER@example.org')).body.map((m) => m.subject)).toEqual(['one'])
    expect((await getJson<MailMessage[]>('/api/messages?to=X@EXAMPLE.ORG')).body).toHaveLength(1)
    expect((await getJson<MailMessage[]>('/api/messages?to=nobody@example.org')).body).toEqual([])
  })

  it('lists newest first, answers latest, and 404 when there is none', async () => {
    for (const subject of ['first', 'second', 'third']) {
      await transport.sendMail({ from: 'a@club.example', to: 'b@example.org', subject, text: subject })
    }
    const all = await getJson<MailMessage[]>('/api/messages')
    expect(all.body.map((m) => m.subject)).toEqual(['third', 'second', 'first'])
    const latest = await getJson<MailMessage>('/api/messages/latest?to=B@example.org')
    expect([latest.status, latest.body.subject]).toEqual([200, 'third'])

    const none = await getJson<{ error: string }>('/api/messages/latest?to=c@example.org')
    expect(none.status).toBe(404)
    expect(none.body.error).toContain('c@example.org')
  })

  it('waits for a message when asked to', async () => {
    const waiting = getJson<MailMessage>('/api/messages/latest?to=late@example.org&wait=5000')
    await transport.sendMail({ from: 'a@club.example', to: 'late@example.org', subject: 'late', text: 'x' })
    const got = await waiting
    expect([got.status, got.body.subject]).toEqual([200, 'late'])
  })

  it('clears all messages, or one address only', async () => {
    await transport.sendMail({ from: 'a@club.example', to: 'keep@example.org', subject: 'keep', text: 'x' })
    await transport.sendMail({ from: 'a@club.example', to: 'drop@example.org', subject: 'drop', text: 'x' })
    const one = await fetch(`${fake.url}/api/messages?to=DROP@example.org`, { method: 'DELETE' })
    expect(await one.json()).toEqual({ deleted: 1 })
    expect((await getJson<MailMessage[]>('/api/messages')).body.map((m) => m.subject)).toEqual(['keep'])
    await fetch(`${fake.url}/api/messages`, { method: 'DELETE' })
    expect((await getJson<MailMessage[]>('/api/messages')).body).toEqual([])
  })

  it('keeps only the newest maxMessages', async () => {
    for (let i = 1; i <= 7; i++) await transport.sendMail({ from: 'a@club.example', to: 'b@example.org', subject: `n${i}`, text: 'x' })
    expect((await getJson<MailMessage[]>('/api/messages')).body.map((m) => m.subject)).toEqual(['n7', 'n6', 'n5', 'n4', 'n3'])
  })

  it('shows the inbox and a message page with the HTML body escaped into a sandboxed frame', async () => {
    await transport.sendMail({
      from: 'a@club.example',
      to: 'b@example.org',
      subject: '<script>alert(1)</script> order',
      text: 'plain',
      html: '<p onclick="x()">hi</p><script>alert(2)</script>',
    })
    const inbox = await (await fetch(`${fake.url}/`)).text()
    expect(inbox).toContain('&lt;script&gt;alert(1)&lt;/script&gt; order')
    expect(inbox).not.toContain('<script>')
    const [m] = (await getJson<MailMessage[]>('/api/messages')).body
    const view = await fetch(`${fake.url}/messages/${m!.id}`)
    const text = await view.text()
    expect(view.headers.get('content-security-policy')).toContain("default-src 'none'")
    expect(text).toContain('<iframe title="HTML body" sandbox srcdoc="&lt;p onclick=&quot;x()&quot;&gt;hi&lt;/p&gt;&lt;script&gt;')
    expect(text).not.toContain('<script>')
  })
})
