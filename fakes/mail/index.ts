import type { Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import { pathToFileURL } from 'node:url'
import type { SMTPServer } from 'smtp-server'
import { createMailHttpServer } from './http'
import { createSmtpServer } from './smtp'
import { MailStore } from './store'

export { MailStore, normaliseAddress, type MailMessage, type MailAttachment } from './store'

export const HOST = '127.0.0.1'

export interface FakeMailOptions {
  /** SMTP port; 0 picks a free one. Default 2525. */
  smtpPort?: number
  /** Mailbox page and JSON API port; 0 picks a free one. Default 8025. */
  httpPort?: number
  /** Messages kept; the oldest go first. Default 500. */
  maxMessages?: number
  log?: (line: string) => void
}

export interface FakeMail {
  smtpPort: number
  httpPort: number
  /** Base URL of the mailbox page and JSON API. */
  url: string
  store: MailStore
  close(): Promise<void>
}

/** Starts the fake SMTP server and its mailbox web page, both on 127.0.0.1. */
export async function startFakeMail(options: FakeMailOptions = {}): Promise<FakeMail> {
  const log = options.log ?? (() => {})
  const store = new MailStore(options.maxMessages ?? 500)
  const smtp = createSmtpServer(store, log)
  smtp.on('error', (err) => log(`smtp error: ${err.message}`))
  const http = createMailHttpServer(store)
  await listen(smtp, options.smtpPort ?? 2525)
  try {
    await listen(http, options.httpPort ?? 8025)
  } catch (err) {
    await new Promise<void>((r) => smtp.close(() => r()))
    throw err
  }
  const smtpPort = (smtp.server.address() as AddressInfo).port
  const httpPort = (http.address() as AddressInfo).port
  return {
    smtpPort,
    httpPort,
    url: `http://${HOST}:${httpPort}`,
    store,
    async close() {
      store.releaseWaiters()
      await Promise.all([
        new Promise<void>((r) => smtp.close(() => r())),
        new Promise<void>((r) => {
          http.close(() => r())
          http.closeAllConnections()
        }),
      ])
    },
  }
}

function listen(server: Server | SMTPServer, port: number): Promise<void> {
  const net: Server = 'server' in server ? (server.server as Server) : server
  return new Promise((resolve, reject) => {
    const onError = (err: Error) => reject(new Error(`Cannot listen on ${HOST}:${port}: ${err.message}`))
    net.once('error', onError)
    server.listen(port, HOST, () => {
      net.off('error', onError)
      resolve()
    })
  })
}

function port(name: string, value: string | undefined, fallback: number): number {
  if (!value) return fallback
  const n = Number(value)
  if (!Number.isInteger(n) || n < 0 || n > 65535) throw new Error(`${name} must be a port number, not '${value}'.`)
  return n
}

/** Options from MAIL_SMTP_PORT and MAIL_HTTP_PORT. */
export function optionsFromEnv(env: NodeJS.ProcessEnv = process.env): FakeMailOptions {
  return {
    smtpPort: port('MAIL_SMTP_PORT', env.MAIL_SMTP_PORT, 2525),
    httpPort: port('MAIL_HTTP_PORT', env.MAIL_HTTP_PORT, 8025),
  }
}

async function main(): Promise<void> {
  const fake = await startFakeMail({ ...optionsFromEnv(), log: (line) => console.log(`[fake-mail] ${line}`) })
  console.log(`[fake-mail] SMTP on ${HOST}:${fake.smtpPort}, mailbox on ${fake.url}`)
  const stop = () => {
    fake.close().then(() => process.exit(0))
  }
  process.on('SIGINT', stop)
  process.on('SIGTERM', stop)
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  main().catch((err) => {
    console.error(`[fake-mail] could not start: ${err instanceof Error ? err.message : String(err)}`)
    process.exit(1)
  })
}
