import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http'
import { inboxPage, messagePage, notFoundPage } from './pages'
import type { MailStore } from './store'

const MAX_WAIT_MS = 30_000

/** The mailbox's web page and JSON API over `store`. */
export function createMailHttpServer(store: MailStore): Server {
  return createServer((req, res) => {
    handle(store, req, res).catch((err: unknown) => {
      if (!res.headersSent) json(res, 500, { error: `The fake mailbox failed: ${err instanceof Error ? err.message : String(err)}` })
      else res.end()
    })
  })
}

async function handle(store: MailStore, req: IncomingMessage, res: ServerResponse): Promise<void> {
  const url = new URL(req.url ?? '/', 'http://mail.local')
  const method = req.method ?? 'GET'
  const parts = url.pathname.split('/').filter(Boolean).map(safeDecode)
  const to = url.searchParams.get('to')

  if (method === 'GET' && parts.length === 0) return html(res, 200, inboxPage(store.list(to), to))
  if (method === 'GET' && parts[0] === 'messages' && parts.length === 2) {
    const stored = store.get(parts[1]!)
    return stored ? html(res, 200, messagePage(stored.message)) : html(res, 404, notFoundPage())
  }
  if (method === 'POST' && parts.length === 1 && parts[0] === 'clear') {
    store.clear()
    res.writeHead(303, { Location: '/' }).end()
    return
  }
  if (parts[0] !== 'api' || parts[1] !== 'messages') return json(res, 404, { error: `Not found: ${method} ${url.pathname}` })

  const rest = parts.slice(2)
  if (method === 'GET' && rest.length === 0) {
    const limit = Number(url.searchParams.get('limit') ?? 0)
    const list = store.list(to)
    return json(res, 200, limit > 0 ? list.slice(0, limit) : list)
  }
  if (method === 'DELETE' && rest.length === 0) return json(res, 200, { deleted: store.clear(to) })
  if (method === 'GET' && rest.length === 1 && rest[0] === 'latest') {
    const wait = Math.min(Math.max(Number(url.searchParams.get('wait') ?? 0) || 0, 0), MAX_WAIT_MS)
    const latest = await store.waitForLatest(to, wait)
    return latest ? json(res, 200, latest) : json(res, 404, { error: to ? `No message for ${to}.` : 'No messages.' })
  }
  if (method === 'GET' && rest.length === 1) {
    const stored = store.get(rest[0]!)
    return stored ? json(res, 200, stored.message) : json(res, 404, { error: 'No such message.' })
  }
  if (method === 'GET' && rest.length === 3 && rest[1] === 'attachments') {
    const stored = store.get(rest[0]!)
    const index = Number(rest[2])
    const meta = stored?.message.attachments[index]
    if (!stored || !meta || !Number.isInteger(index)) return json(res, 404, { error: 'No such attachment.' })
    res.writeHead(200, {
      'Content-Type': meta.contentType,
      'Content-Disposition': `attachment; filename*=UTF-8''${encodeURIComponent(meta.filename)}`,
      'X-Content-Type-Options': 'nosniff',
    })
    res.end(stored.contents[index])
    return
  }
  json(res, 404, { error: `Not found: ${method} ${url.pathname}` })
}

function safeDecode(segment: string): string {
  try {
    return decodeURIComponent(segment)
  } catch {
    return segment
  }
}

function json(res: ServerResponse, status: number, body: unknown): void {
  res.writeHead(status, { 'Content-Type': 'application/json', 'Cache-Control': 'no-store' })
  res.end(JSON.stringify(body, null, 2))
}

function html(res: ServerResponse, status: number, body: string): void {
  res.writeHead(status, {
    'Content-Type': 'text/html; charset=utf-8',
    'Cache-Control': 'no-store',
    // The mail's own HTML runs in the srcdoc frame under this policy too: no scripts, no outside loads.
    'Content-Security-Policy': "default-src 'none'; style-src 'unsafe-inline'; img-src data: cid:; frame-src 'self'; form-action 'self'",
  })
  res.end(body)
}
