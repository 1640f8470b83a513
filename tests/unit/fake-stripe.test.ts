// The fake is checked with the official stripe SDK (23.1.0) as the oracle: its request encoding,
// its error classes and its webhook signature check (constructEvent) must accept what the fake does.
import { createServer, type Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import Stripe from 'stripe'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { parseForm } from '../../fakes/stripe/form'
import { startFakeStripe, type FakeStripe } from '../../fakes/stripe/index'
import { luhn } from '../../fakes/stripe/state'

const SECRET = 'whsec_test_fake'
const KEY = 'sk_test_kitwright'

interface Received {
  raw: string
  signature: string
}

/** A tiny webhook endpoint: records every delivery and answers with the next queued status (200 when empty). */
function startReceiver(): Promise<{ server: Server; url: string; received: Received[]; answers: number[] }> {
  const received: Received[] = []
  const answers: number[] = []
  const server = createServer((req, res) => {
    const chunks: Buffer[] = []
    req.on('data', (c: Buffer) => chunks.push(c))
    req.on('end', () => {
      received.push({ raw: Buffer.concat(chunks).toString('utf8'), signature: String(req.headers['stripe-signature']) })
      res.writeHead(answers.shift() ?? 200).end()
    })
  })
  return new Promise((resolve) => {
    server.listen(0, '127.0.0.1', () => {
      const url = `http://127.0.0.1:${(server.address() as AddressInfo).port}/hook`
      resolve({ server, url, received, answers })
    })
  })
}

let fake: FakeStripe
let receiver: Awaited<ReturnType<typeof startReceiver>>
let stripe: Stripe

beforeAll(async () => {
  receiver = await startReceiver()
  fake = await startFakeStripe({
    port: 0,
    webhookUrl: receiver.url,
    webhookSecret: SECRET,
    webhookRetryDelaysMs: [20, 40],
    expiryCheckMs: 50,
  })
  stripe = new Stripe(KEY, { host: '127.0.0.1', port: fake.port, protocol: 'http', telemetry: false, maxNetworkRetries: 0 })
})

afterAll(async () => {
  await fake?.close()
  await new Promise((r) => receiver?.server.close(r))
})

beforeEach(async () => {
  await fake.webhooksIdle()
  await testPost('/_test/reset')
  receiver.received.length = 0
  receiver.answers.length = 0
})

async function testPost(path: string, body?: unknown): Promise<{ status: number; json: any }> {
  const res = await fetch(`${fake.url}${path}`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json' },
    body: body === undefined ? undefined : JSON.stringify(body),
  })
  return { status: res.status, json: await res.json() }
}

async function testEvents(): Promise<any[]> {
  return (await (await fetch(`${fake.url}/_test/events`)).json()).data
}

/** Verified events the receiver got, checked by the SDK's own signature check. */
function verifiedEvents(): Stripe.Event[] {
  return receiver.received.map((r) => stripe.webhooks.constructEvent(r.raw, r.signature, SECRET))
}

function createSession(extra: Partial<Stripe.Checkout.SessionCreateParams> = {}, options?: Stripe.RequestOptions) {
  return stripe.checkout.sessions.create({
    mode: 'payment',
    line_items: [
      { price_data: { currency: 'gbp', unit_amount: 1250, product_data: { name: 'Regen receiver kit' } }, quantity: 2 },
      { price_data: { currency: 'gbp', unit_amount: 300, product_data: { name: '40 m band set' } }, quantity: 1 },
    ],
    success_url: 'http://127.0.0.1:3000/orders/done?session={CHECKOUT_SESSION_ID}',
    cancel_url: 'http://127.0.0.1:3000/orders/cancelled',
    client_reference_id: 'order-17',
    customer_email: 'builder@example.org',
    metadata: { order_id: '17', build_day: 'spring' },
    ...extra,
  }, options)
}

describe('form bodies with bracket keys', () => {
  it('nests objects and indexed lists as the SDK encodes them', () => {
    const parsed = parseForm(
      'mode=payment&line_items[0][price_data][currency]=gbp&line_items[0][quantity]=2'
        + '&line_items[1][price_data][currency]=eur&metadata[order_id]=17&metadata%5Bnote%5D=a%26b&expand[]=line_items',
    )
    expect(parsed).toEqual({
      mode: 'payment',
      line_items: [{ price_data: { currency: 'gbp' }, quantity: '2' }, { price_data: { currency: 'eur' } }],
      metadata: { order_id: '17', note: 'a&b' },
      expand: ['line_items'],
    })
  })

  it('rejects a key used both as a value and as an object', () => {
    expect(() => parseForm('metadata=x&metadata[a]=1')).toThrow(/metadata\[a\]/)
  })

  it('Luhn check matches the published test numbers (ISO/IEC 7812-1; common practice)', () => {
    expect(luhn('4242424242424242')).toBe(true)
    expect(luhn('4000000000000002')).toBe(true)
    expect(luhn('4242424242424241')).toBe(false)
  })
})

describe('checkout sessions through the official SDK', () => {
  it('creates and retrieves a session in Stripe\'s shape', async () => {
    const created = await createSession()
    expect(created.id).toMatch(/^cs_test_[A-Za-z0-9]+$/)
    expect(created.object).toBe('checkout.session')
    // 2 × 12.50 + 1 × 3.00 = 28.00 GBP in pence (arithmetic)
    expect(created.amount_total).toBe(2800)
    expect(created.currency).toBe('gbp')
    expect(created.status).toBe('open')
    expect(created.payment_status).toBe('unpaid')
    expect(created.payment_intent).toBeNull()
    expect(created.url).toBe(`${fake.url}/pay/${created.id}`)
    expect(created.metadata).toEqual({ order_id: '17', build_day: 'spring' })
    expect(created.client_reference_id).toBe('order-17')
    // Default lifetime 24 h (Stripe's documented default for expires_at; from memory)
    expect(created.expires_at - created.created).toBe(24 * 3600)

    const again = await stripe.checkout.sessions.retrieve(created.id)
    expect(again).toEqual(JSON.parse(JSON.stringify(created)))
    const withItems = await stripe.checkout.sessions.retrieve(created.id, { expand: ['line_items'] })
    expect(withItems.line_items?.data.map((li) => [li.description, li.quantity, li.amount_total])).toEqual([
      ['Regen receiver kit', 2, 2500],
      ['40 m band set', 1, 300],
    ])
  })

  it('maps an unknown session to StripeInvalidRequestError with resource_missing', async () => {
    const err = await stripe.checkout.sessions.retrieve('cs_test_nope').catch((e) => e)
    expect(err).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError)
    expect(err.statusCode).toBe(404)
    expect(err.code).toBe('resource_missing')
    expect(err.param).toBe('id')
  })

  it('rejects missing and bad parameters with the param named', async () => {
    const missing = await stripe.checkout.sessions.create({ mode: 'payment', success_url: 'http://127.0.0.1/x' }).catch((e) => e)
    expect(missing).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError)
    expect([missing.statusCode, missing.code, missing.param]).toEqual([400, 'parameter_missing', 'line_items'])

    const negative = await createSession({
      line_items: [{ price_data: { currency: 'gbp', unit_amount: -5, product_data: { name: 'x' } }, quantity: 1 }],
    }).catch((e) => e)
    expect([negative.statusCode, negative.param]).toEqual([400, 'line_items[0][price_data][unit_amount]'])

    const fraction = await createSession({
      line_items: [{ price_data: { currency: 'gbp', unit_amount: 12.5, product_data: { name: 'x' } }, quantity: 1 }],
    }).catch((e) => e)
    expect([fraction.statusCode, fraction.code]).toEqual([400, 'parameter_invalid_integer'])

    // Stripe's minimum charge in GBP is 0.30 (from memory of Stripe's published minimums)
    const tiny = await createSession({
      line_items: [{ price_data: { currency: 'gbp', unit_amount: 29, product_data: { name: 'x' } }, quantity: 1 }],
    }).catch((e) => e)
    expect([tiny.statusCode, tiny.code]).toEqual([400, 'amount_too_small'])

    const badUrl = await createSession({ success_url: 'not a url' }).catch((e) => e)
    expect([badUrl.statusCode, badUrl.code, badUrl.param]).toEqual([400, 'url_invalid', 'success_url'])
  })

  it('answers 401 in Stripe\'s error shape without a valid test key', async () => {
    const live = new Stripe('sk_live_abcdefghijklmnop', { host: '127.0.0.1', port: fake.port, protocol: 'http', telemetry: false, maxNetworkRetries: 0 })
    const err = await live.checkout.sessions.retrieve('cs_test_x').catch((e) => e)
    expect(err).toBeInstanceOf(Stripe.errors.StripeAuthenticationError)
    expect(err.statusCode).toBe(401)

    const res = await fetch(`${fake.url}/v1/checkout/sessions`, { method: 'POST', body: 'mode=payment' })
    expect(res.status).toBe(401)
    expect((await res.json()).error.type).toBe('invalid_request_error')
  })
})

describe('paying and webhooks', () => {
  it('pays through /_test and delivers a completed event that constructEvent accepts', async () => {
    const session = await createSession()
    const paid = await testPost(`/_test/sessions/${session.id}/pay`)
    expect(paid.status).toBe(200)
    expect(paid.json.redirect_to).toBe(`http://127.0.0.1:3000/orders/done?session=${session.id}`)
    await fake.webhooksIdle()

    const events = verifiedEvents()
    expect(events.map((e) => e.type)).toEqual(['checkout.session.completed'])
    const completed = events[0]!.data.object as Stripe.Checkout.Session
    expect(completed.id).toBe(session.id)
    expect(completed.payment_status).toBe('paid')
    expect(completed.metadata).toEqual({ order_id: '17', build_day: 'spring' })
    expect(events[0]!.id).toMatch(/^evt_/)
    expect(events[0]!.livemode).toBe(false)
    expect(events[0]!.api_version).toBe(Stripe.API_VERSION)

    const after = await stripe.checkout.sessions.retrieve(session.id)
    expect(after.status).toBe('complete')
    expect(after.payment_intent).toMatch(/^pi_/)
    const pi = await stripe.paymentIntents.retrieve(after.payment_intent as string)
    expect([pi.status, pi.amount, pi.currency]).toEqual(['succeeded', 2800, 'gbp'])
  })

  it('signs with the configured secret only', async () => {
    const session = await createSession()
    await testPost(`/_test/sessions/${session.id}/pay`)
    await fake.webhooksIdle()
    const { raw, signature } = receiver.received[0]!
    expect(() => stripe.webhooks.constructEvent(raw, signature, 'whsec_other')).toThrow(Stripe.errors.StripeSignatureVerificationError)
    expect(() => stripe.webhooks.constructEvent(raw.replace('"paid"', '"unpaid"'), signature, SECRET)).toThrow(
      Stripe.errors.StripeSignatureVerificationError,
    )
  })

  it('a decline leaves the session open and sends no event', async () => {
    const session = await createSession()
    const declined = await testPost(`/_test/sessions/${session.id}/decline`)
    expect(declined.json.error).toMatchObject({ type: 'card_error', code: 'card_declined', decline_code: 'generic_decline' })
    await fake.webhooksIdle()
    expect(receiver.received).toHaveLength(0)
    expect(await testEvents()).toHaveLength(0)
    expect((await stripe.checkout.sessions.retrieve(session.id)).status).toBe('open')
  })

  it('the hosted pay page pays, declines and cancels', async () => {
    const session = await createSession()
    const page = await (await fetch(session.url!)).text()
    expect(page).toContain('Local test payment page')
    expect(page).toContain('4242 4242 4242 4242')
    expect(page).toContain('Regen receiver kit')

    const form = (card: string) => ({ method: 'POST', body: new URLSearchParams({ card }), redirect: 'manual' as const })
    const declined = await fetch(session.url!, form('4000 0000 0000 0002'))
    expect(declined.status).toBe(402)
    expect(await declined.text()).toContain('Your card was declined.')

    const cancel = await fetch(`${session.url}/cancel`, { method: 'POST', redirect: 'manual' })
    expect([cancel.status, cancel.headers.get('location')]).toEqual([303, 'http://127.0.0.1:3000/orders/cancelled'])
    await fake.webhooksIdle()
    expect(receiver.received).toHaveLength(0)

    const paid = await fetch(session.url!, form('4242 4242 4242 4242'))
    expect(paid.status).toBe(303)
    expect(paid.headers.get('location')).toBe(`http://127.0.0.1:3000/orders/done?session=${session.id}`)
    await fake.webhooksIdle()
    expect(verifiedEvents().map((e) => e.type)).toEqual(['checkout.session.completed'])
  })

  it('expiring through the SDK emits checkout.session.expired once', async () => {
    const session = await createSession()
    const expired = await stripe.checkout.sessions.expire(session.id)
    expect([expired.status, expired.url]).toEqual(['expired', null])
    const again = await stripe.checkout.sessions.expire(session.id).catch((e) => e)
    expect(again).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError)
    await fake.webhooksIdle()
    const events = verifiedEvents()
    expect(events.map((e) => e.type)).toEqual(['checkout.session.expired'])
    expect((events[0]!.data.object as Stripe.Checkout.Session).id).toBe(session.id)
    const payLate = await testPost(`/_test/sessions/${session.id}/pay`)
    expect(payLate.status).toBe(400)
  })

  it('expires a session when its expires_at passes on the fake clock', async () => {
    const session = await createSession({ expires_at: Math.floor(Date.now() / 1000) + 3600 })
    const tick = await testPost('/_test/clock', { advance_seconds: 3601 })
    expect(tick.json.expired).toBe(1)
    await fake.webhooksIdle()
    expect(verifiedEvents().map((e) => [e.type, (e.data.object as { id: string }).id])).toEqual([['checkout.session.expired', session.id]])
    const tooSoon = await createSession({ expires_at: Math.floor(Date.now() / 1000) + 60 }).catch((e) => e)
    expect([tooSoon.statusCode, tooSoon.param]).toEqual([400, 'expires_at'])
  })

  it('expires due sessions on its own timer', async () => {
    const session = await createSession()
    fake.state.clockOffsetMs += (24 * 3600 + 1) * 1000
    const deadline = Date.now() + 5000
    while ((await testEvents()).length === 0 && Date.now() < deadline) await new Promise((r) => setTimeout(r, 20))
    await fake.webhooksIdle()
    expect(verifiedEvents().map((e) => [e.type, (e.data.object as { id: string }).id])).toEqual([['checkout.session.expired', session.id]])
  })

  it('tries again after a 500 until the receiver answers 2xx', async () => {
    receiver.answers.push(500)
    const session = await createSession()
    await testPost(`/_test/sessions/${session.id}/pay`)
    await fake.webhooksIdle()
    const [record] = await testEvents()
    expect(record.attempts.map((a: { status: number }) => a.status)).toEqual([500, 200])
    expect(record.delivery).toBe('delivered')
    const ids = verifiedEvents().map((e) => e.id)
    expect(ids).toEqual([record.id, record.id])
  })

  it('gives up after the configured tries when the receiver is unreachable, and resends on request', async () => {
    const closed = createServer()
    await new Promise<void>((r) => closed.listen(0, '127.0.0.1', () => r()))
    const deadUrl = `http://127.0.0.1:${(closed.address() as AddressInfo).port}/hook`
    await new Promise((r) => closed.close(r))
    await testPost('/_test/webhook', { url: deadUrl })

    const session = await createSession()
    await testPost(`/_test/sessions/${session.id}/pay`)
    await fake.webhooksIdle()
    let [record] = await testEvents()
    expect(record.attempts).toHaveLength(3) // 1 + two retry delays
    expect(record.attempts.every((a: { status: number | null }) => a.status === null)).toBe(true)
    expect(record.delivery).toBe('failed')

    await testPost('/_test/webhook', { url: receiver.url })
    await testPost(`/_test/events/${record.id}/resend`)
    await fake.webhooksIdle()
    ;[record] = await testEvents()
    expect(record.delivery).toBe('delivered')
    expect(verifiedEvents().map((e) => e.id)).toEqual([record.id])
  })
})

describe('refunds', () => {
  async function paidIntent(): Promise<string> {
    const session = await createSession()
    const paid = await testPost(`/_test/sessions/${session.id}/pay`)
    return paid.json.payment_intent.id
  }

  it('refunds in full by default and emits charge.refunded', async () => {
    const pi = await paidIntent()
    const refund = await stripe.refunds.create({ payment_intent: pi })
    expect(refund.id).toMatch(/^re_/)
    expect([refund.object, refund.amount, refund.currency, refund.payment_intent, refund.status]).toEqual(['refund', 2800, 'gbp', pi, 'succeeded'])
    expect(await stripe.refunds.retrieve(refund.id)).toEqual(JSON.parse(JSON.stringify(refund)))
    await fake.webhooksIdle()
    const refunded = verifiedEvents().find((e) => e.type === 'charge.refunded')!
    const charge = refunded.data.object as Stripe.Charge
    expect([charge.payment_intent, charge.amount_refunded, charge.refunded]).toEqual([pi, 2800, true])

    const twice = await stripe.refunds.create({ payment_intent: pi }).catch((e) => e)
    expect([twice.statusCode, twice.code]).toEqual([400, 'charge_already_refunded'])
  })

  it('refunds part, then refuses more than is left', async () => {
    const pi = await paidIntent()
    const part = await stripe.refunds.create({ payment_intent: pi, amount: 1250 })
    expect(part.amount).toBe(1250)
    const over = await stripe.refunds.create({ payment_intent: pi, amount: 1551 }).catch((e) => e)
    expect(over).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError)
    expect([over.statusCode, over.code, over.param]).toEqual([400, 'amount_too_large', 'amount'])
    const rest = await stripe.refunds.create({ payment_intent: pi, amount: 1550 })
    expect(rest.amount).toBe(1550)
  })

  it('refuses an intent that was never paid', async () => {
    const err = await stripe.refunds.create({ payment_intent: 'pi_never_paid' }).catch((e) => e)
    expect(err).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError)
    expect([err.statusCode, err.code, err.param]).toEqual([400, 'resource_missing', 'payment_intent'])
  })
})

describe('idempotency', () => {
  const body = new URLSearchParams({
    mode: 'payment',
    success_url: 'http://127.0.0.1:3000/ok',
    'line_items[0][price_data][currency]': 'gbp',
    'line_items[0][price_data][unit_amount]': '500',
    'line_items[0][price_data][product_data][name]': 'Tuner kit',
    'line_items[0][quantity]': '1',
  }).toString()
  const post = (key: string, payload: string) =>
    fetch(`${fake.url}/v1/checkout/sessions`, {
      method: 'POST',
      headers: { Authorization: `Bearer ${KEY}`, 'Content-Type': 'application/x-www-form-urlencoded', 'Idempotency-Key': key },
      body: payload,
    })

  it('replays the stored response for the same key and body', async () => {
    const first = await post('key-1', body)
    const second = await post('key-1', body)
    expect(first.status).toBe(200)
    expect(second.status).toBe(200)
    expect(second.headers.get('idempotent-replayed')).toBe('true')
    expect(first.headers.get('idempotent-replayed')).toBeNull()
    expect(await second.text()).toBe(await first.text())
    expect(fake.state.sessions.size).toBe(1)
  })

  it('refuses the same key with another body', async () => {
    await post('key-2', body)
    const other = await post('key-2', body.replace('500', '600'))
    expect(other.status).toBe(400)
    expect((await other.json()).error.type).toBe('idempotency_error')
  })

  it('works the same through the SDK', async () => {
    const a = await createSession({}, { idempotencyKey: 'sdk-key' })
    const b = await createSession({}, { idempotencyKey: 'sdk-key' })
    expect(b.id).toBe(a.id)
    const err = await createSession({ client_reference_id: 'order-18' }, { idempotencyKey: 'sdk-key' }).catch((e) => e)
    expect(err).toBeInstanceOf(Stripe.errors.StripeIdempotencyError)
    // Without a key of its own, the SDK sends a fresh one per call: two sessions.
    const c = await createSession()
    expect(c.id).not.toBe(a.id)
  })
})

describe('outage', () => {
  it('answers 503 while down and recovers', async () => {
    await fetch(`${fake.url}/_test/down?ms=60000`, { method: 'POST' })
    const err = await createSession().catch((e) => e)
    expect(err).toBeInstanceOf(Stripe.errors.StripeAPIError)
    expect(err.statusCode).toBe(503)
    await fetch(`${fake.url}/_test/down?ms=0`, { method: 'POST' })
    expect((await createSession()).status).toBe('open')
  })
})
