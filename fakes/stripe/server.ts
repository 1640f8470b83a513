import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http'
import type { AddressInfo } from 'node:net'
import type { SessionRecord } from './checkout'
import { ApiError, invalid } from './errors'
import { FormShapeError, parseForm, type FormObject } from './form'
import { newId } from './ids'
import { messagePage, payPage } from './pages'
import { FakeStripeState, DECLINED_CARD, SUCCESS_CARD, type RequestInfo } from './state'
import { WebhookDispatcher, type EventRecord } from './webhooks'

/** The API version the stripe SDK in package.json (23.1.0) pins; used when a request names none. */
export const DEFAULT_API_VERSION = '2026-10-28.endive'

export interface FakeStripeOptions {
  /** 0 picks a free port. Default 12111. */
  port?: number
  /** Base of the pay page links in session.url. Default http://127.0.0.1:<port>. */
  publicUrl?: string
  /** Where events are POSTed; null or '' keeps them undelivered. */
  webhookUrl?: string | null
  webhookSecret?: string
  /** Waits between webhook tries; tries = length + 1. Default 1, 2, 4, 8, 16 s. */
  webhookRetryDelaysMs?: number[]
  webhookTimeoutMs?: number
  /** How often open sessions are checked against expires_at. Default 1000 ms. */
  expiryCheckMs?: number
  /** Clock in ms (tests may pass their own); /_test/clock adds an offset on top. */
  now?: () => number
  log?: (line: string) => void
}

export interface FakeStripe {
  port: number
  url: string
  state: FakeStripeState
  /** Resolves when no webhook try is running or scheduled. */
  webhooksIdle(): Promise<void>
  close(): Promise<void>
}

export const DEFAULTS = {
  port: 12111,
  webhookUrl: 'http://127.0.0.1:3000/api/stripe/webhook',
  webhookSecret: 'whsec_kitwright',
  webhookRetryDelaysMs: [1000, 2000, 4000, 8000, 16000],
  webhookTimeoutMs: 10_000,
  expiryCheckMs: 1000,
}

interface StoredResponse {
  fingerprint: string
  status: number
  body: string
  requestId: string
}

const MAX_BODY = 1024 * 1024

/** Starts the fake Stripe API on 127.0.0.1. */
export async function startFakeStripe(options: FakeStripeOptions = {}): Promise<FakeStripe> {
  const log = options.log ?? (() => {})
  const initialWebhook = {
    url: options.webhookUrl === undefined ? DEFAULTS.webhookUrl : options.webhookUrl || null,
    secret: options.webhookSecret ?? DEFAULTS.webhookSecret,
  }
  const webhooks = new WebhookDispatcher({ ...initialWebhook }, {
    retryDelaysMs: options.webhookRetryDelaysMs ?? DEFAULTS.webhookRetryDelaysMs,
    timeoutMs: options.webhookTimeoutMs ?? DEFAULTS.webhookTimeoutMs,
    log,
  })
  let publicUrl = options.publicUrl?.replace(/\/+$/, '') ?? ''
  const state = new FakeStripeState({
    payUrl: (id) => `${publicUrl}/pay/${id}`,
    defaultApiVersion: DEFAULT_API_VERSION,
    now: options.now ?? Date.now,
  }, webhooks)
  const ctx: Ctx = { state, webhooks, idempotency: new Map(), downUntil: 0, initialWebhook, log }

  const server = createServer((req, res) => {
    handle(ctx, req, res).catch((err) => {
      log(`error: ${err instanceof Error ? err.stack : String(err)}`)
      if (!res.headersSent) sendJson(res, 500, { error: { type: 'api_error', message: 'The local fake Stripe failed on this request.' } })
      else res.end()
    })
  })
  await listen(server, options.port ?? DEFAULTS.port)
  const port = (server.address() as AddressInfo).port
  if (!publicUrl) publicUrl = `http://127.0.0.1:${port}`

  const expiryTimer = setInterval(() => state.expireDue(), options.expiryCheckMs ?? DEFAULTS.expiryCheckMs)
  expiryTimer.unref()

  return {
    port,
    url: `http://127.0.0.1:${port}`,
    state,
    webhooksIdle: () => webhooks.idle(),
    async close() {
      clearInterval(expiryTimer)
      await webhooks.close()
      await new Promise<void>((resolve) => {
        server.close(() => resolve())
        server.closeAllConnections()
      })
    },
  }
}

interface Ctx {
  state: FakeStripeState
  webhooks: WebhookDispatcher
  idempotency: Map<string, StoredResponse>
  downUntil: number
  initialWebhook: { url: string | null; secret: string }
  log: (line: string) => void
}

function listen(server: Server, port: number): Promise<void> {
  return new Promise((resolve, reject) => {
    server.once('error', reject)
    server.listen(port, '127.0.0.1', () => {
      server.off('error', reject)
      resolve()
    })
  })
}

async function handle(ctx: Ctx, req: IncomingMessage, res: ServerResponse): Promise<void> {
  const url = new URL(req.url ?? '/', 'http://fake.local')
  const path = url.pathname
  const method = req.method ?? 'GET'
  if (path.startsWith('/v1/')) return handleApi(ctx, req, res, url)
  if (path.startsWith('/pay/')) return handlePay(ctx, req, res, path)
  if (path.startsWith('/_test/')) {
    if (!isLoopback(req.socket.remoteAddress)) return sendJson(res, 403, { error: { message: 'Test controls answer on loopback only.' } })
    return handleTest(ctx, req, res, url)
  }
  if (path === '/' && method === 'GET') {
    return sendJson(res, 200, { name: 'Kitwright local fake Stripe', api: '/v1', pay_page: '/pay/:session_id', test_controls: '/_test' })
  }
  sendJson(res, 404, { error: { type: 'invalid_request_error', message: `Unrecognized request URL (${method}: ${path}).` } })
}

// ---------- /v1 API ----------

async function handleApi(ctx: Ctx, req: IncomingMessage, res: ServerResponse, url: URL): Promise<void> {
  const method = req.method ?? 'GET'
  const requestId = newId('req', 14)
  const apiVersion = header(req, 'stripe-version')
  const baseHeaders: Record<string, string> = { 'Request-Id': requestId, 'Stripe-Version': apiVersion ?? DEFAULT_API_VERSION }
  ctx.log(`${method} ${url.pathname}`)

  if (Date.now() < ctx.downUntil) {
    return sendJson(res, 503, { error: { type: 'api_error', message: 'The local fake Stripe is simulating an outage; try again later.' } }, baseHeaders)
  }
  const apiKey = authenticate(req)
  if (typeof apiKey !== 'string') return sendJson(res, 401, apiKey.toJSON(), baseHeaders)

  let raw: string
  try {
    raw = method === 'POST' ? await readBody(req) : url.search.slice(1)
  } catch (err) {
    if (err instanceof ApiError) return sendJson(res, err.status, err.toJSON(), baseHeaders)
    throw err
  }
  const idemKey = method === 'POST' ? header(req, 'idempotency-key') : null
  const info: RequestInfo = { requestId, idempotencyKey: idemKey, apiVersion }

  let params: FormObject
  try {
    params = parseForm(raw)
  } catch (err) {
    if (err instanceof FormShapeError) return sendJson(res, 400, invalid(err.message, err.param).toJSON(), baseHeaders)
    throw err
  }

  let storeKey: string | null = null
  let fingerprint = ''
  if (idemKey) {
    if (idemKey.length > 255) {
      return sendJson(res, 400, invalid('Idempotency keys can be at most 255 characters long.', undefined, 'idempotency_key_too_long').toJSON(), baseHeaders)
    }
    storeKey = `${apiKey}\n${idemKey}`
    fingerprint = `${method} ${url.pathname} ${canonical(params)}`
    const stored = ctx.idempotency.get(storeKey)
    if (stored) {
      if (stored.fingerprint !== fingerprint) {
        return sendJson(res, 400, {
          error: {
            type: 'idempotency_error',
            message: `Keys for idempotent requests can only be used with the same parameters they were first used with. Try using a key other than '${idemKey}' if you meant to execute a different request.`,
          },
        }, baseHeaders)
      }
      return sendRaw(res, stored.status, stored.body, { ...baseHeaders, 'Request-Id': stored.requestId, 'Idempotent-Replayed': 'true' })
    }
  }

  let status = 200
  let body: unknown
  try {
    body = route(ctx, method, url.pathname, params, info)
  } catch (err) {
    if (!(err instanceof ApiError)) throw err
    status = err.status
    body = err.toJSON()
  }
  const text = JSON.stringify(body, null, 2)
  if (storeKey) ctx.idempotency.set(storeKey, { fingerprint, status, body: text, requestId })
  sendRaw(res, status, text, { ...baseHeaders, ...(storeKey && { 'Idempotency-Key': idemKey! }) })
}

function route(ctx: Ctx, method: string, path: string, params: FormObject, info: RequestInfo): unknown {
  const { state } = ctx
  const parts = path.split('/').slice(2).map(safeDecode) // after '/v1/'
  const expand = expandList(params)
  const is = (m: string, ...pattern: string[]) =>
    method === m && parts.length === pattern.length && pattern.every((p, i) => p === '*' || p === parts[i])

  if (is('POST', 'checkout', 'sessions')) {
    const session = state.createCheckoutSession(params, info)
    return expandSession(ctx, state.getSession(session.id), expand)
  }
  if (is('GET', 'checkout', 'sessions', '*')) return expandSession(ctx, state.getSession(parts[2]!), expand)
  if (is('GET', 'checkout', 'sessions', '*', 'line_items')) return lineItemList(state.getSession(parts[2]!))
  if (is('POST', 'checkout', 'sessions', '*', 'expire')) {
    const session = state.expire(parts[2]!, info)
    return expandSession(ctx, state.getSession(session.id), expand)
  }
  if (is('POST', 'refunds')) return state.createRefund(params, info)
  if (is('GET', 'refunds', '*')) return state.getRefund(parts[1]!)
  if (is('GET', 'payment_intents', '*')) return state.getPaymentIntent(parts[1]!)
  if (is('GET', 'charges', '*')) return state.getCharge(parts[1]!)
  if (is('GET', 'events', '*')) return state.getEvent(parts[1]!).event
  throw invalid(`Unrecognized request URL (${method}: ${path}). The local fake speaks only the part of the API Kitwright uses.`, undefined, undefined, 404)
}

function expandList(params: FormObject): string[] {
  const value = params.expand
  delete params.expand
  if (value === undefined) return []
  if (!Array.isArray(value) || value.some((v) => typeof v !== 'string')) throw invalid('Invalid array', 'expand', 'parameter_invalid')
  return value as string[]
}

function expandSession(ctx: Ctx, record: SessionRecord, expand: string[]): unknown {
  const out: Record<string, unknown> = { ...record.session }
  for (const field of expand) {
    if (field === 'line_items') out.line_items = lineItemList(record)
    else if (field === 'payment_intent') {
      out.payment_intent = record.session.payment_intent ? ctx.state.getPaymentIntent(record.session.payment_intent) : null
    } else throw invalid(`This property cannot be expanded (${field}).`, 'expand', 'parameter_invalid')
  }
  return out
}

function lineItemList(record: SessionRecord) {
  return { object: 'list', data: record.lineItems, has_more: false, url: `/v1/checkout/sessions/${record.session.id}/line_items` }
}

function authenticate(req: IncomingMessage): string | ApiError {
  const auth = header(req, 'authorization') ?? ''
  let key = ''
  if (/^bearer /i.test(auth)) key = auth.slice(7).trim()
  else if (/^basic /i.test(auth)) key = Buffer.from(auth.slice(6).trim(), 'base64').toString('utf8').split(':')[0] ?? ''
  if (!key) {
    return invalid("You did not provide an API key. You need to provide your API key in the Authorization header, using Bearer auth (e.g. 'Authorization: Bearer YOUR_SECRET_KEY').", undefined, undefined, 401)
  }
  if (!/^(sk|rk)_test_[A-Za-z0-9_]+$/.test(key)) {
    const shown = key.length > 12 ? `${key.slice(0, 8)}${'*'.repeat(8)}${key.slice(-4)}` : key.replace(/./g, '*')
    return invalid(`Invalid API Key provided: ${shown}. The local fake accepts test keys only (sk_test_...).`, undefined, undefined, 401)
  }
  return key
}

// ---------- hosted pay page ----------

async function handlePay(ctx: Ctx, req: IncomingMessage, res: ServerResponse, path: string): Promise<void> {
  const [, , rawId, action] = path.split('/')
  const id = safeDecode(rawId ?? '')
  const record = ctx.state.sessions.get(id)
  if (!record) return sendHtml(res, 404, messagePage('Payment not found', 'No checkout session has this id in the local fake. It may have been reset.'))
  const method = req.method ?? 'GET'
  const info: RequestInfo = { requestId: null, idempotencyKey: null, apiVersion: record.apiVersion }

  if (action === 'cancel' && (method === 'POST' || method === 'GET')) {
    if (!record.session.cancel_url) return sendHtml(res, 200, messagePage('Payment cancelled', 'You can close this page.'))
    return redirect(res, record.session.cancel_url)
  }
  if (action !== undefined) return sendHtml(res, 404, messagePage('Not found', 'This page does not exist.'))
  if (method === 'GET') return sendHtml(res, 200, payPage(record))
  if (method !== 'POST') return sendHtml(res, 405, messagePage('Not allowed', 'Use the form on the payment page.'))

  const form = new URLSearchParams(await readBody(req))
  const card = form.get('card') ?? ''
  if (record.session.status !== 'open') return sendHtml(res, 200, payPage(record))
  try {
    ctx.state.pay(id, card, info)
  } catch (err) {
    if (!(err instanceof ApiError)) throw err
    return sendHtml(res, err.status, payPage(record, err.message, card || SUCCESS_CARD))
  }
  redirect(res, successRedirect(record))
}

function successRedirect(record: SessionRecord): string {
  return record.session.success_url.replaceAll('{CHECKOUT_SESSION_ID}', record.session.id)
}

// ---------- /_test controls ----------

async function handleTest(ctx: Ctx, req: IncomingMessage, res: ServerResponse, url: URL): Promise<void> {
  const { state } = ctx
  const method = req.method ?? 'GET'
  const parts = url.pathname.split('/').slice(2).map(safeDecode)
  const is = (m: string, ...pattern: string[]) =>
    method === m && parts.length === pattern.length && pattern.every((p, i) => p === '*' || p === parts[i])
  const info: RequestInfo = { requestId: null, idempotencyKey: null, apiVersion: null }
  try {
    const body = method === 'POST' ? await readJson(req) : {}
    if (is('GET', 'sessions')) {
      const ref = url.searchParams.get('client_reference_id')
      const list = [...state.sessions.values()].map((r) => r.session).filter((s) => !ref || s.client_reference_id === ref)
      return sendJson(res, 200, { data: list.reverse() })
    }
    if (is('POST', 'sessions', '*', 'pay')) {
      const record = state.getSession(parts[1]!)
      const card = typeof body.card === 'string' ? body.card : SUCCESS_CARD
      const { session, paymentIntent } = state.pay(parts[1]!, card, { ...info, apiVersion: record.apiVersion })
      return sendJson(res, 200, { session, payment_intent: paymentIntent, redirect_to: successRedirect(record) })
    }
    if (is('POST', 'sessions', '*', 'decline')) {
      const record = state.getSession(parts[1]!)
      try {
        state.pay(parts[1]!, typeof body.card === 'string' ? body.card : DECLINED_CARD, info)
      } catch (err) {
        if (err instanceof ApiError && err.status === 402) return sendJson(res, 200, { declined: true, ...err.toJSON(), session: record.session })
        throw err
      }
      return sendJson(res, 400, invalid('That card was not declined: it paid the session.').toJSON())
    }
    if (is('POST', 'sessions', '*', 'expire')) {
      const record = state.getSession(parts[1]!)
      return sendJson(res, 200, { session: state.expire(parts[1]!, { ...info, apiVersion: record.apiVersion }) })
    }
    if (is('GET', 'events')) {
      const type = url.searchParams.get('type')
      const list = [...state.events.values()].filter((r) => !type || r.event.type === type).reverse()
      return sendJson(res, 200, { data: list.map(eventSummary) })
    }
    if (is('POST', 'events', '*', 'resend')) {
      const record = state.getEvent(parts[1]!)
      ctx.webhooks.dispatch(record)
      return sendJson(res, 200, eventSummary(record))
    }
    if (is('POST', 'webhook')) {
      if (body.url !== undefined) ctx.webhooks.config.url = typeof body.url === 'string' && body.url ? checkUrl(body.url) : null
      if (body.secret !== undefined) {
        if (typeof body.secret !== 'string' || !body.secret) throw invalid('secret must be a non-empty string.', 'secret')
        ctx.webhooks.config.secret = body.secret
      }
      return sendJson(res, 200, { ...ctx.webhooks.config })
    }
    if (is('POST', 'reset')) {
      ctx.webhooks.cancelAll()
      state.reset()
      ctx.idempotency.clear()
      ctx.downUntil = 0
      ctx.webhooks.config = { ...ctx.initialWebhook }
      return sendJson(res, 200, { reset: true })
    }
    if (is('POST', 'down')) {
      const ms = Number(url.searchParams.get('ms') ?? body.ms ?? 30_000)
      if (!Number.isFinite(ms) || ms < 0) throw invalid('ms must be a number of milliseconds, 0 or more.', 'ms')
      ctx.downUntil = Date.now() + ms
      return sendJson(res, 200, { down_until: new Date(ctx.downUntil).toISOString() })
    }
    if (is('POST', 'clock')) {
      const seconds = Number(body.advance_seconds ?? url.searchParams.get('advance_seconds'))
      if (!Number.isFinite(seconds) || seconds < 0) throw invalid('advance_seconds must be a number, 0 or more.', 'advance_seconds')
      state.clockOffsetMs += seconds * 1000
      const expired = state.expireDue()
      return sendJson(res, 200, { now: state.nowS(), expired })
    }
    throw invalid(`Unknown test control (${method}: ${url.pathname}).`, undefined, undefined, 404)
  } catch (err) {
    if (err instanceof ApiError) return sendJson(res, err.status, err.toJSON())
    throw err
  }
}

function eventSummary(record: EventRecord) {
  const object = record.event.data.object as { id?: string }
  return {
    id: record.event.id,
    type: record.event.type,
    created: record.event.created,
    object_id: object.id ?? null,
    delivery: record.delivery,
    attempts: record.attempts,
    event: record.event,
  }
}

function checkUrl(value: string): string {
  try {
    const u = new URL(value)
    if (u.protocol === 'http:' || u.protocol === 'https:') return value
  } catch {}
  throw invalid('url must be an http(s) URL, or null to stop deliveries.', 'url', 'url_invalid')
}

// ---------- plumbing ----------

function safeDecode(segment: string): string {
  try {
    return decodeURIComponent(segment)
  } catch {
    return segment
  }
}

function header(req: IncomingMessage, name: string): string | null {
  const v = req.headers[name]
  return (Array.isArray(v) ? v[0] : v) ?? null
}

export function isLoopback(address: string | undefined): boolean {
  if (!address) return false
  return address === '::1' || /^(::ffff:)?127\./.test(address)
}

function readBody(req: IncomingMessage): Promise<string> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = []
    let size = 0
    req.on('data', (chunk: Buffer) => {
      size += chunk.length
      if (size > MAX_BODY) {
        reject(invalid('The request body is too large.', undefined, undefined, 413))
        req.destroy()
      } else chunks.push(chunk)
    })
    req.on('end', () => resolve(Buffer.concat(chunks).toString('utf8')))
    req.on('error', reject)
  })
}

async function readJson(req: IncomingMessage): Promise<Record<string, unknown>> {
  const text = (await readBody(req)).trim()
  if (!text) return {}
  try {
    const value = JSON.parse(text)
    if (value && typeof value === 'object' && !Array.isArray(value)) return value
  } catch {}
  throw invalid('The body must be a JSON object (or empty).')
}

/** Key-sorted JSON, so the same parameters in another order count as the same request. */
function canonical(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(canonical).join(',')}]`
  if (value && typeof value === 'object') {
    const entries = Object.entries(value).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))
    return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonical(v)}`).join(',')}}`
  }
  return JSON.stringify(value)
}

function sendJson(res: ServerResponse, status: number, body: unknown, headers: Record<string, string> = {}): void {
  sendRaw(res, status, JSON.stringify(body, null, 2), headers)
}

function sendRaw(res: ServerResponse, status: number, text: string, headers: Record<string, string> = {}): void {
  res.writeHead(status, { 'Content-Type': 'application/json', 'Cache-Control': 'no-store', ...headers })
  res.end(text)
}

function sendHtml(res: ServerResponse, status: number, html: string): void {
  res.writeHead(status, {
    'Content-Type': 'text/html; charset=utf-8',
    'Cache-Control': 'no-store',
    'Content-Security-Policy': "default-src 'none'; style-src 'unsafe-inline'; form-action *",
  })
  res.end(html)
}

function redirect(res: ServerResponse, location: string): void {
  res.writeHead(303, { Location: location, 'Cache-Control': 'no-store' })
  res.end()
}
