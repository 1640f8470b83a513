// Checkout against the real server, MariaDB and the fake Stripe (through the official SDK on the
// server side): no oversell under 200 concurrent checkouts, a payment service outage, a declined
// card, a lapsed hold and a refund. Stock figures are invented for these tests.
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { latestMail, signedIn } from '../support/client'
import { connect, makeBuilders, makeKitDay, ordersOfDay, payAndWait, sessionIdOf, stockState, waitUntil, type Conn } from './selling-fixtures'

const base = inject('baseUrl')
const stripeUrl = inject('stripeUrl')
const mailUrl = inject('mailUrl')
let db: Conn

beforeAll(async () => { db = await connect(inject('dbUrl')) })
afterAll(async () => { await db?.end() })

async function stripeTest(path: string, body?: unknown) {
  const res = await fetch(`${stripeUrl}/_test/${path}`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body ?? {}) })
  expect(res.ok, `fake control ${path}`).toBe(true)
  return res.json()
}

describe('no oversell', () => {
  it('200 concurrent checkouts at a day with stock and seats for exactly 40 hold exactly 40 kits', async () => {
    // Line 1 needs 2 a kit from 60 own + 20 stand-in (40 kits); line 2 needs 1 from 40 (40 kits); 40 seats.
    const day = await makeKitDay(db, { seats: 40, lines: [{ qty: 2, stock: 60, standInStock: 20 }, { qty: 1, stock: 40 }] })
    let t = Date.now()
    const buyers = await makeBuilders(db, base, 200)
    console.info(`200 sign-ins: ${Date.now() - t} ms`)
    t = Date.now()
    const results = await Promise.all(buyers.map(b => b.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId, optionIds: [] })))
    console.info(`200 concurrent checkouts: ${Date.now() - t} ms`)
    const ok = results.filter(r => r.status === 200)
    const refused = results.filter(r => r.status === 409)
    expect(ok).toHaveLength(40)
    expect(refused).toHaveLength(160)
    for (const r of refused) expect(r.body.message).toMatch(/sold out|seat/i)
    for (const r of ok) expect(r.body.url).toContain('/pay/cs_test_')

    const orders = await ordersOfDay(db, day.dayId)
    expect(orders).toHaveLength(40)
    expect(orders.every(o => o.state === 'pending' && o.stripe_session_id)).toBe(true)
    const parts = day.partIds.flat()
    const s = await stockState(db, parts)
    const [own1, standIn1] = day.partIds[0]!
    const [own2] = day.partIds[1]!
    // Every kit: 2 of line 1 (own first, then the stand-in) and 1 of line 2, all held.
    expect(s.reserved(own1!, 'held') + s.reserved(standIn1!, 'held')).toBe(80)
    expect(s.reserved(own1!, 'held')).toBe(60)
    expect(s.reserved(standIn1!, 'held')).toBe(20)
    expect(s.reserved(own2!, 'held')).toBe(40)
    expect(s.reservations.every(r => r.state === 'held')).toBe(true)
    // The ledger agrees with the lots (holds do not move stock), and nothing is promised twice.
    for (const lot of s.lots) expect(lot.onHand).toBe(lot.ledger)
    for (const p of parts) {
      const onHand = s.lots.filter(l => l.partId === p).reduce((n, l) => n + l.onHand, 0)
      expect(s.reserved(p, 'held')).toBeLessThanOrEqual(onHand)
    }
    // Each order holds one kit: 3 units, of which 2 on line 1.
    const [perOrder] = await db.query<any[]>('select order_id, sum(qty) as qty from reservations where order_id in (?) group by order_id', [orders.map(o => o.id)])
    expect(perOrder.map((r: any) => Number(r.qty))).toEqual(new Array(40).fill(3))

    const organiser = await signedIn(base, 'organiser')
    const avail = await organiser.get(`/api/build-days/${day.dayId}/availability`)
    expect(avail.status).toBe(200)
    expect(avail.body.seatsLeft).toBe(0)
    expect(avail.body.offerings[0].choices[0]).toMatchObject({ kits: 0, sellable: 0 })
  }, 300_000)
})

describe('payment service trouble', () => {
  it('when the fake is down, checkout fails with a clear message and leaves no reservation behind', async () => {
    const day = await makeKitDay(db, { seats: 5, lines: [{ qty: 1, stock: 5 }] })
    const [buyer] = await makeBuilders(db, base, 1)
    await fetch(`${stripeUrl}/_test/down?ms=3000`, { method: 'POST' })
    try {
      const res = await buyer!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
      expect(res.status).toBe(503)
      expect(res.body.message).toMatch(/card payment service is not answering.*nothing was reserved or charged/i)
    }
    finally {
      await fetch(`${stripeUrl}/_test/down?ms=0`, { method: 'POST' })
    }
    const orders = await ordersOfDay(db, day.dayId)
    expect(orders.map(o => o.state)).toEqual(['cancelled'])
    const s = await stockState(db, day.partIds.flat())
    expect(s.reservations.filter(r => r.state === 'held' || r.state === 'confirmed')).toEqual([])
    // Once the service answers again the same member can buy.
    const again = await buyer!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    expect(again.status).toBe(200)
  })

  it('a declined card leaves only the held reservation, which the session\'s expiry releases', async () => {
    const day = await makeKitDay(db, { seats: 5, lines: [{ qty: 3, stock: 9 }] })
    const [buyer] = await makeBuilders(db, base, 1)
    const res = await buyer!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    expect(res.status).toBe(200)
    const sessionId = sessionIdOf(res.body.url)
    const declined = await stripeTest(`sessions/${sessionId}/decline`)
    expect(declined.declined).toBe(true)
    await new Promise(r => setTimeout(r, 300))
    let [order] = await ordersOfDay(db, day.dayId)
    expect(order.state).toBe('pending')
    let s = await stockState(db, day.partIds.flat())
    expect(s.reserved(day.partIds[0]![0]!, 'held')).toBe(3)

    await stripeTest(`sessions/${sessionId}/expire`)
    order = await waitUntil('the hold released', async () => (await ordersOfDay(db, day.dayId)).find(o => o.state === 'expired'))
    expect(order.cancel_reason).toMatch(/expired/)
    s = await stockState(db, day.partIds.flat())
    expect(s.reserved(day.partIds[0]![0]!, 'held')).toBe(0)
    expect(s.reserved(day.partIds[0]![0]!, 'released')).toBe(3)
    const mine = await buyer!.client.get(`/api/checkout/${order.id}`)
    expect(mine.body).toMatchObject({ state: 'expired', payUrl: null })
  })

  it('a member who gives up on the payment page gets the stock and seat released at once', async () => {
    const day = await makeKitDay(db, { seats: 1, lines: [{ qty: 1, stock: 1 }] })
    const [a, b] = await makeBuilders(db, base, 2)
    const first = await a!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    expect(first.status).toBe(200)
    expect((await b!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })).status).toBe(409)
    const cancel = await a!.client.post(`/api/checkout/${first.body.orderId}/cancel`)
    expect(cancel.body).toMatchObject({ state: 'cancelled', released: true })
    const session = await (await fetch(`${stripeUrl}/_test/sessions?client_reference_id=${first.body.orderId}`)).json()
    expect(session.data[0].status).toBe('expired')
    expect((await b!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })).status).toBe(200)
  })

  it('a hold whose time has run out is released by the sweeper', async () => {
    const day = await makeKitDay(db, { seats: 2, lines: [{ qty: 1, stock: 2 }] })
    const [buyer] = await makeBuilders(db, base, 1)
    const res = await buyer!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    expect(res.status).toBe(200)
    await db.query('update orders set hold_expires_at = ? where id = ?', [new Date(Date.now() - 1000), res.body.orderId])
    const order = await waitUntil('the sweeper', async () => (await ordersOfDay(db, day.dayId)).find(o => o.state === 'expired'), 25_000)
    expect(order.cancel_reason).toMatch(/ran out/)
    const s = await stockState(db, day.partIds.flat())
    expect(s.reserved(day.partIds[0]![0]!, 'held')).toBe(0)
  }, 30_000)
})

describe('paying and refunding', () => {
  it('payment confirms the stock, gives a seat, makes a bag and e-mails the order; a refund releases the stock', async () => {
    const day = await makeKitDay(db, { seats: 3, lines: [{ qty: 2, stock: 6 }, { qty: 1, stock: 3 }], memberPrice: 2750 })
    const [buyer] = await makeBuilders(db, base, 1)
    const started = Date.now()
    const res = await buyer!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    expect(res.status).toBe(200)
    const paid = await payAndWait(db, stripeUrl, sessionIdOf(res.body.url), res.body.orderId)
    expect(paid.seat).toBe(1)
    expect(paid.stripe_payment_intent).toMatch(/^pi_/)
    let s = await stockState(db, day.partIds.flat())
    expect(s.reserved(day.partIds[0]![0]!, 'confirmed')).toBe(2)
    expect(s.reserved(day.partIds[1]![0]!, 'confirmed')).toBe(1)
    const [bags] = await db.query<any[]>('select b.id, count(i.id) as items from bags b join bag_items i on i.bag_id = b.id where b.order_id = ? group by b.id', [paid.id])
    expect(bags.map((b: any) => Number(b.items))).toEqual([2])
    const mail = await latestMail(mailUrl, buyer!.email, { after: started - 1000 })
    expect(mail.subject).toMatch(/is confirmed/)
    expect(mail.text).toContain(`Order: #${paid.id}`)
    expect(mail.text).toContain('Seat: 1')
    expect(mail.text).toContain('£27.50')

    const organiser = await signedIn(base, 'organiser')
    const noReason = await organiser.post(`/api/orders/${paid.id}/cancel`, {})
    expect(noReason.status).toBe(400)
    const cancel = await organiser.post(`/api/orders/${paid.id}/cancel`, { reason: 'Build day moved; member cannot come' })
    expect(cancel.status).toBe(200)
    expect(cancel.body.state).toBe('refunded')
    expect(cancel.body.refundId).toMatch(/^re_/)
    s = await stockState(db, day.partIds.flat())
    expect(s.reserved(day.partIds[0]![0]!, 'confirmed')).toBe(0)
    expect(s.reserved(day.partIds[0]![0]!, 'released')).toBe(2)
    const [[order]] = await db.query<any[]>('select * from orders where id = ?', [paid.id])
    expect(order).toMatchObject({ state: 'refunded', seat: null })
    const [auditRows] = await db.query<any[]>('select * from audit_log where action = ? and subject_id = ?', ['order.refund', String(paid.id)])
    expect(auditRows).toHaveLength(1)
    const refundMail = await latestMail(mailUrl, buyer!.email, { after: Date.now() - 5000 })
    expect(refundMail.subject).toMatch(/refunded/)
    // The fake saw the refund of the whole charge.
    const events = await (await fetch(`${stripeUrl}/_test/events?type=charge.refunded`)).json()
    const charge = events.data.map((e: any) => e.event.data.object).find((c: any) => c.payment_intent === paid.stripe_payment_intent)
    expect(charge).toMatchObject({ refunded: true, amount_refunded: 2750 })
    // A second cancel changes nothing.
    expect((await organiser.post(`/api/orders/${paid.id}/cancel`, { reason: 'again' })).status).toBe(409)
  })
})
