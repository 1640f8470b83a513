// Payment events: signatures are made and checked with the official stripe SDK's own
// generateTestHeaderString / constructEvent (the oracle), events come from the fake Stripe or are
// built here in Stripe's event shape. A replayed, reordered or forged event must change nothing.
import Stripe from 'stripe'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { latestMail } from '../support/client'
import { connect, makeBuilders, makeKitDay, ordersOfDay, payAndWait, sessionIdOf, stockState, waitUntil, type Conn } from './selling-fixtures'

const base = inject('baseUrl')
const stripeUrl = inject('stripeUrl')
const mailUrl = inject('mailUrl')
const secret = inject('webhookSecret')
const sdk = new Stripe('sk_test_oracle', { telemetry: false })
let db: Conn

beforeAll(async () => { db = await connect(inject('dbUrl')) })
afterAll(async () => {
  await fetch(`${stripeUrl}/_test/webhook`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ url: `${base}/api/stripe/webhook` }) })
  await db?.end()
})

let seq = 0
/** A checkout.session.* event in Stripe's shape for a session object. */
function eventFor(type: string, session: Record<string, unknown>, id = `evt_test_kw_${Date.now()}_${++seq}`) {
  return { id, object: 'event', api_version: '2025-01-27', created: Math.floor(Date.now() / 1000), data: { object: session }, livemode: false, pending_webhooks: 1, request: { id: null, idempotency_key: null }, type }
}

async function deliver(event: unknown, sign = secret) {
  const payload = JSON.stringify(event)
  const signature = sdk.webhooks.generateTestHeaderString({ payload, secret: sign })
  const res = await fetch(`${base}/api/stripe/webhook`, { method: 'POST', headers: { 'content-type': 'application/json', 'stripe-signature': signature }, body: payload })
  return { status: res.status, body: await res.json() }
}

async function fakeSession(id: string) {
  const list = await (await fetch(`${stripeUrl}/_test/sessions`)).json()
  return list.data.find((s: any) => s.id === id)
}

async function fakeEvents(type: string, sessionId: string) {
  const list = await (await fetch(`${stripeUrl}/_test/events?type=${type}`)).json()
  return list.data.filter((e: any) => e.object_id === sessionId)
}

async function setWebhook(url: string | null) {
  await fetch(`${stripeUrl}/_test/webhook`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ url }) })
}

async function orderRow(id: number) {
  const [[o]] = await db.query<any[]>('select * from orders where id = ?', [id])
  return o
}

async function mailCount(to: string) {
  const list = await (await fetch(`${mailUrl}/api/messages?to=${encodeURIComponent(to)}`)).json()
  return (Array.isArray(list) ? list : list.messages ?? list.data ?? []).length
}

async function paidOrder(seats = 3, stock = 3) {
  const day = await makeKitDay(db, { seats, lines: [{ qty: 1, stock }] })
  const [buyer] = await makeBuilders(db, base, 1)
  const res = await buyer!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
  expect(res.status).toBe(200)
  const sessionId = sessionIdOf(res.body.url)
  const order = await payAndWait(db, stripeUrl, sessionId, res.body.orderId)
  return { day, buyer: buyer!, order, sessionId }
}

describe('forged events', () => {
  it('refuses a wrong signature with 400 and changes nothing', async () => {
    const day = await makeKitDay(db, { seats: 2, lines: [{ qty: 1, stock: 2 }] })
    const [buyer] = await makeBuilders(db, base, 1)
    const res = await buyer!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    const session = await fakeSession(sessionIdOf(res.body.url))
    const forged = eventFor('checkout.session.completed', { ...session, status: 'complete', payment_status: 'paid', payment_intent: 'pi_forged' })
    const wrongKey = await deliver(forged, 'whsec_not_the_secret')
    expect(wrongKey.status).toBe(400)
    expect(wrongKey.body.message).toMatch(/signature/)
    const unsigned = await fetch(`${base}/api/stripe/webhook`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(forged) })
    expect(unsigned.status).toBe(400)
    // A body changed after signing fails too.
    const payload = JSON.stringify(forged)
    const signature = sdk.webhooks.generateTestHeaderString({ payload, secret })
    const tampered = await fetch(`${base}/api/stripe/webhook`, { method: 'POST', headers: { 'content-type': 'application/json', 'stripe-signature': signature }, body: payload.replace('pi_forged', 'pi_forgee') })
    expect(tampered.status).toBe(400)
    expect((await orderRow(res.body.orderId)).state).toBe('pending')
    const [seen] = await db.query<any[]>('select * from stripe_events where id = ?', [forged.id])
    expect(seen).toEqual([])
  })
})

describe('replayed events', () => {
  it('a completed event delivered again (resend, or the same body in parallel) changes nothing', async () => {
    const { order, sessionId, buyer, day } = await paidOrder()
    const mails = await waitUntil('the confirmation', async () => (await mailCount(buyer.email)) || null)
    const [completed] = await fakeEvents('checkout.session.completed', sessionId)
    expect(completed.delivery).toBe('delivered')
    const resend = await fetch(`${stripeUrl}/_test/events/${completed.id}/resend`, { method: 'POST' })
    expect(resend.ok).toBe(true)
    await waitUntil('the resend delivered', async () => (await fakeEvents('checkout.session.completed', sessionId))[0].attempts.length >= 2)
    // The same event body five times at once: one wins the event id, the rest are duplicates.
    const replays = await Promise.all(Array.from({ length: 5 }, () => deliver(completed.event)))
    expect(replays.map(r => r.status)).toEqual([200, 200, 200, 200, 200])
    expect(replays.every(r => /duplicate/.test(r.body.outcome))).toBe(true)
    const after = await orderRow(order.id)
    expect(after).toMatchObject({ state: 'paid', seat: order.seat })
    expect(after.paid_at.getTime()).toBe(order.paid_at.getTime())
    const [bags] = await db.query<any[]>('select id from bags where order_id = ?', [order.id])
    expect(bags).toHaveLength(1)
    const s = await stockState(db, day.partIds.flat())
    expect(s.reserved(day.partIds[0]![0]!, 'confirmed')).toBe(1)
    expect(s.reservations).toHaveLength(1)
    await new Promise(r => setTimeout(r, 300))
    expect(await mailCount(buyer.email)).toBe(mails)
    const [rows] = await db.query<any[]>('select * from stripe_events where id = ?', [completed.id])
    expect(rows).toHaveLength(1)
    expect(rows[0].outcome).toMatch(/^paid, seat/)
  })

  it('an event for a session Kitwright does not know is acknowledged and recorded', async () => {
    const unknown = eventFor('checkout.session.completed', { id: 'cs_test_nobody_knows', object: 'checkout.session', metadata: { order_id: '987654321' }, client_reference_id: '987654321', payment_intent: 'pi_x', payment_status: 'paid', status: 'complete' })
    const res = await deliver(unknown)
    expect(res.status).toBe(200)
    expect(res.body.outcome).toMatch(/unknown session/)
    const [rows] = await db.query<any[]>('select * from stripe_events where id = ?', [unknown.id])
    expect(rows[0].outcome).toMatch(/unknown session cs_test_nobody_knows/)
    // Other event types are acknowledged and left alone.
    const other = await deliver({ ...eventFor('charge.refunded', { id: 'ch_x', object: 'charge' }) })
    expect(other).toMatchObject({ status: 200, body: { received: true } })
  })
})

describe('events out of order', () => {
  it('an expired event after the payment changes nothing', async () => {
    const { order, sessionId, day } = await paidOrder()
    const session = await fakeSession(sessionId)
    const late = await deliver(eventFor('checkout.session.expired', { ...session, status: 'expired' }))
    expect(late.status).toBe(200)
    expect(late.body.outcome).toMatch(/nothing to do: order is paid/)
    expect((await orderRow(order.id)).state).toBe('paid')
    const s = await stockState(db, day.partIds.flat())
    expect(s.reserved(day.partIds[0]![0]!, 'confirmed')).toBe(1)
  })

  it('a payment that arrives after the member cancelled takes the kit again while stock and a seat remain', async () => {
    const day = await makeKitDay(db, { seats: 2, lines: [{ qty: 2, stock: 4 }] })
    const [buyer] = await makeBuilders(db, base, 1)
    const res = await buyer!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    const sessionId = sessionIdOf(res.body.url)
    await setWebhook(null)
    try {
      await fetch(`${stripeUrl}/_test/sessions/${sessionId}/pay`, { method: 'POST' })
      expect((await buyer!.client.post(`/api/checkout/${res.body.orderId}/cancel`)).body.state).toBe('cancelled')
    }
    finally {
      await setWebhook(`${base}/api/stripe/webhook`)
    }
    const [completed] = await fakeEvents('checkout.session.completed', sessionId)
    await fetch(`${stripeUrl}/_test/events/${completed.id}/resend`, { method: 'POST' })
    const paid = await waitUntil('the late payment', async () => { const o = await orderRow(res.body.orderId); return o.state === 'paid' ? o : null })
    expect(paid.seat).toBe(1)
    const s = await stockState(db, day.partIds.flat())
    expect(s.reserved(day.partIds[0]![0]!, 'confirmed')).toBe(2)
    expect(s.reserved(day.partIds[0]![0]!, 'released')).toBe(2)
  })

  it('a payment that arrives after the member cancelled and the last kit went to someone else is refunded', async () => {
    const day = await makeKitDay(db, { seats: 5, lines: [{ qty: 1, stock: 1 }] })
    const [late, other] = await makeBuilders(db, base, 2)
    const res = await late!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    const sessionId = sessionIdOf(res.body.url)
    await setWebhook(null)
    try {
      await fetch(`${stripeUrl}/_test/sessions/${sessionId}/pay`, { method: 'POST' })
      await late!.client.post(`/api/checkout/${res.body.orderId}/cancel`)
    }
    finally {
      await setWebhook(`${base}/api/stripe/webhook`)
    }
    const taken = await other!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    expect(taken.status).toBe(200)
    const started = Date.now()
    const [completed] = await fakeEvents('checkout.session.completed', sessionId)
    await fetch(`${stripeUrl}/_test/events/${completed.id}/resend`, { method: 'POST' })
    const refunded = await waitUntil('the refund', async () => { const o = await orderRow(res.body.orderId); return o.state === 'refunded' ? o : null })
    expect(refunded.cancel_reason).toMatch(/refunded/)
    const mail = await latestMail(mailUrl, late!.email, { after: started - 1000 })
    expect(mail.subject).toMatch(/refunded/)
    const refunds = await (await fetch(`${stripeUrl}/_test/events?type=refund.created`)).json()
    expect(refunds.data.some((e: any) => e.event.data.object.payment_intent === completed.event.data.object.payment_intent)).toBe(true)
    // The other member's hold is untouched; nothing is over-promised.
    const s = await stockState(db, day.partIds.flat())
    expect(s.reserved(day.partIds[0]![0]!, 'held')).toBe(1)
    expect(s.reserved(day.partIds[0]![0]!, 'confirmed')).toBe(0)
    const orders = await ordersOfDay(db, day.dayId)
    expect(orders.map(o => o.state).sort()).toEqual(['pending', 'refunded'])
  })
})
