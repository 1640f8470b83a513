// Build days, offerings, pricing, the shop, the waiting list and the orders page, against the real
// server and MariaDB. Kits, stock and people here are the tests' own (invented).
import ExcelJS from 'exceljs'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { latestMail, signedIn, type Client } from '../support/client'
import { connect, makeBuilders, makeKitDay, payAndWait, sessionIdOf, uid, waitUntil, type Conn } from './selling-fixtures'

const base = inject('baseUrl')
const stripeUrl = inject('stripeUrl')
const mailUrl = inject('mailUrl')
let db: Conn
let organiser: Client

beforeAll(async () => {
  db = await connect(inject('dbUrl'))
  organiser = await signedIn(base, 'organiser')
})
afterAll(async () => { await db?.end() })

const soon = (days: number) => new Date(Date.now() + days * 86400_000).toISOString()

describe('build days', () => {
  it('are created, listed, changed and deleted; broken input names the field', async () => {
    const name = `Spring build ${uid()}`
    const backwards = await organiser.post('/api/build-days', { name, date: '2027-04-10', venue: 'Hall', seats: 20, salesOpenAt: soon(5), salesCloseAt: soon(1) })
    expect(backwards.status).toBe(400)
    expect(backwards.body.data.fields.salesCloseAt).toMatch(/close after they open/)
    const shortHold = await organiser.post('/api/build-days', { name, date: '2027-04-10', venue: 'Hall', seats: 20, salesOpenAt: soon(0), salesCloseAt: soon(9), holdMinutes: 10 })
    expect(shortHold.status).toBe(400)
    expect(shortHold.body.data.fields.holdMinutes).toMatch(/30 minutes/)

    const made = await organiser.post('/api/build-days', { name, date: '2027-04-10', venue: 'Hall', seats: 20, salesOpenAt: soon(0), salesCloseAt: soon(9) })
    expect(made.status).toBe(200)
    expect(made.body).toMatchObject({ name, seats: 20, holdMinutes: 30, currency: 'GBP' })
    const list = await organiser.get('/api/build-days')
    expect(list.body.find((d: any) => d.id === made.body.id)).toMatchObject({ seatsTaken: 0, paid: 0, waiting: 0 })
    const changed = await organiser.patch(`/api/build-days/${made.body.id}`, { venue: 'Upper hall', seats: 24 })
    expect(changed.body).toMatchObject({ venue: 'Upper hall', seats: 24 })
    expect((await organiser.del(`/api/build-days/${made.body.id}`)).status).toBe(200)
    expect((await organiser.get(`/api/build-days/${made.body.id}`)).status).toBe(404)
  })

  it('keep their seats above those taken, and cannot be deleted once ordered from', async () => {
    const day = await makeKitDay(db, { seats: 3, lines: [{ qty: 1, stock: 5 }] })
    const buyers = await makeBuilders(db, base, 2)
    for (const b of buyers) expect((await b.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })).status).toBe(200)
    const fewer = await organiser.patch(`/api/build-days/${day.dayId}`, { seats: 1 })
    expect(fewer.status).toBe(409)
    expect(fewer.body.message).toMatch(/2 seats are already taken/)
    expect((await organiser.del(`/api/build-days/${day.dayId}`)).status).toBe(409)
    const detail = await organiser.get(`/api/build-days/${day.dayId}`)
    expect(detail.body).toMatchObject({ seatsTaken: 2 })
    expect(detail.body.offerings[0]).toMatchObject({ orders: 2, revision: { label: 'A', state: 'released' } })
  })
})

describe('offerings', () => {
  it('only a released revision is sold, once per day, with a choice left in every "choose one" group', async () => {
    const day = await makeKitDay(db, { seats: 4, lines: [{ qty: 1, stock: 4 }], option: [{ qty: 1, stock: 4 }, { qty: 1, stock: 4 }] })
    const [draft] = await db.query<any>('insert into revisions (kit_id, label, state) values (?, ?, ?)', [day.kitId, 'B', 'draft'])
    const other = await organiser.post('/api/build-days', { name: `Other day ${uid()}`, date: '2027-05-01', venue: 'Hall', seats: 10, salesOpenAt: soon(0), salesCloseAt: soon(9) })
    const offer = (revisionId: number, allowedOptionIds: number[]) => organiser.post('/api/offerings', { buildDayId: other.body.id, revisionId, allowedOptionIds, memberPriceMinor: 2000, nonMemberPriceMinor: 2400 })
    const ofDraft = await offer(draft.insertId, [])
    expect(ofDraft.status).toBe(400)
    expect(ofDraft.body.data.fields.revisionId).toMatch(/only a released revision/)
    const noChoice = await offer(day.revisionId, [])
    expect(noChoice.status).toBe(400)
    expect(noChoice.body.data.fields.allowedOptionIds).toMatch(/Allow at least one option of "Band"/)
    const ok = await offer(day.revisionId, [day.optionIds[0]!])
    expect(ok.status).toBe(200)
    expect((await offer(day.revisionId, [day.optionIds[0]!])).status).toBe(409)
    const patched = await organiser.patch(`/api/offerings/${ok.body.id}`, { allowedOptionIds: day.optionIds, memberPriceMinor: 2100 })
    expect(patched.status).toBe(200)
    const detail = await organiser.get(`/api/build-days/${other.body.id}`)
    expect(detail.body.offerings[0]).toMatchObject({ memberPriceMinor: 2100, allowedOptionIds: day.optionIds })
    expect((await organiser.del(`/api/offerings/${ok.body.id}`)).status).toBe(200)
  })

  it('availability counts kits per option choice from available stock (stand-ins included) and seats', async () => {
    // Base line: 2 a kit from 7 own + 4 stand-in = 5 kits; band 1 needs 1 from 3; band 2 needs 3 from 6 = 2 kits.
    const day = await makeKitDay(db, { seats: 4, lines: [{ qty: 2, stock: 7, standInStock: 4 }], option: [{ qty: 1, stock: 3 }, { qty: 3, stock: 6 }] })
    const res = await organiser.get(`/api/build-days/${day.dayId}/availability`)
    expect(res.status).toBe(200)
    const choices = res.body.offerings[0].choices
    expect(choices.map((c: any) => [c.optionIds, c.kits, c.sellable])).toEqual([[[day.optionIds[0]], 3, 3], [[day.optionIds[1]], 2, 2]])
    expect(res.body.seatsLeft).toBe(4)
  })
})

describe('pricing', () => {
  const inputs = {
    method: 'average', currency: 'GBP', extras: { boardMinor: 0, enclosureMinor: 0, bagMinor: 0, labelMinor: 0 }, sparesPercent: 0, overheadMinor: 0,
    marginPercent: 0, fee: { percent: 2.9, fixedMinor: 30 }, stepMinor: 1, memberDiscountPercent: 0, nonMemberSurchargeMinor: 320, nonMemberSurchargePercent: 0,
  }

  it('grosses the net up for the card fee: 96.80 → 100.00 and 100.00 → 103.30 at 2.9 % + 0.30', async () => {
    // Check values: the fee algebra in the handbook's sources (charge = (net + fixed) / (1 − rate), rounded up).
    const day = await makeKitDay(db, { seats: 4, lines: [{ qty: 1, stock: 10 }] })
    await db.query('update lots set unit_cost_minor = 9680 where id = ?', [day.lotIds[0]])
    const res = await organiser.post('/api/pricing/preview', { revisionId: day.revisionId, inputs })
    expect(res.status).toBe(200)
    const [choice] = res.body.choices
    expect(choice.price).toMatchObject({ partsMinor: 9680, costMinor: 9680, netMinor: 9680, memberPriceMinor: 10000, nonMemberNetMinor: 10000, nonMemberPriceMinor: 10330 })
    expect(choice.price.breakdown.find((b: any) => b.label === 'Member price').minor).toBe(10000)
    expect(choice.parts).toEqual([expect.objectContaining({ qty: 1, costMinor: 9680, covered: true })])
    // Rounding up to the next 0.50 (step rounding, common practice for cash-friendly prices).
    const stepped = await organiser.post('/api/pricing/preview', { revisionId: day.revisionId, inputs: { ...inputs, stepMinor: 50 } })
    expect(stepped.body.choices[0].price).toMatchObject({ memberPriceMinor: 10000, nonMemberPriceMinor: 10350 })
  })

  it('costs parts at the weighted average by default and oldest-first with FIFO', async () => {
    // Common practice: weighted average = (10 × 1.00 + 10 × 2.00) / 20 = 1.50 each; FIFO takes the older 1.00 lot first.
    const day = await makeKitDay(db, { seats: 4, lines: [{ qty: 2, stock: 10 }] })
    const [[lot]] = await db.query<any[]>('select * from lots where id = ?', [day.lotIds[0]])
    await db.query('update lots set unit_cost_minor = 200, received_on = ? where id = ?', ['2026-11-20', lot.id])
    const [older] = await db.query<any>('insert into lots (part_id, bin_id, qty_received, on_hand, unit_cost_minor, currency, received_on) values (?, ?, 10, 10, 100, ?, ?)', [lot.part_id, lot.bin_id, 'GBP', '2026-10-01'])
    await db.query('insert into ledger (lot_id, part_id, bin_id, kind, qty, reason) values (?, ?, ?, ?, 10, ?)', [older.insertId, lot.part_id, lot.bin_id, 'receive', 'Older test lot'])
    const avg = await organiser.post('/api/pricing/preview', { revisionId: day.revisionId, inputs })
    const fifo = await organiser.post('/api/pricing/preview', { revisionId: day.revisionId, inputs: { ...inputs, method: 'fifo' } })
    expect(avg.body.choices[0].price.partsMinor).toBe(300)
    expect(fifo.body.choices[0].price.partsMinor).toBe(200)
    const bad = await organiser.post('/api/pricing/preview', { revisionId: day.revisionId, inputs: { ...inputs, fee: { percent: 100, fixedMinor: 0 } } })
    expect(bad.status).toBe(400)
  })

  it('publishing writes the history and an audit row and sets the offering prices', async () => {
    const day = await makeKitDay(db, { seats: 4, lines: [{ qty: 1, stock: 10 }] })
    await db.query('update lots set unit_cost_minor = 9680 where id = ?', [day.lotIds[0]])
    const wrongOffering = await organiser.post('/api/pricing/publish', { revisionId: day.revisionId, optionIds: [], inputs, offeringIds: [999999] })
    expect(wrongOffering.status).toBe(400)
    const res = await organiser.post('/api/pricing/publish', { revisionId: day.revisionId, optionIds: [], inputs, offeringIds: [day.offeringId] })
    expect(res.status).toBe(200)
    expect(res.body).toMatchObject({ memberPriceMinor: 10000, nonMemberPriceMinor: 10330 })
    const [[offering]] = await db.query<any[]>('select * from offerings where id = ?', [day.offeringId])
    expect(offering).toMatchObject({ member_price_minor: 10000, non_member_price_minor: 10330 })
    const history = await organiser.get(`/api/pricing/history?revisionId=${day.revisionId}`)
    expect(history.body).toHaveLength(1)
    expect(history.body[0]).toMatchObject({ memberPriceMinor: 10000, publishedByName: 'Olwen Hartley' })
    expect(history.body[0].breakdown.find((b: any) => b.label === 'Net to the club').minor).toBe(9680)
    const [audits] = await db.query<any[]>('select * from audit_log where action = ? and subject_id = ?', ['price.publish', String(day.revisionId)])
    expect(audits).toHaveLength(1)
  })

  it('saves its inputs as the defaults', async () => {
    const saved = await organiser.put('/api/pricing/settings', { ...inputs, marginPercent: 12.5 })
    expect(saved.status).toBe(200)
    expect((await organiser.get('/api/pricing/settings')).body.marginPercent).toBe(12.5)
    expect((await organiser.put('/api/pricing/settings', { ...inputs, stepMinor: 0 })).status).toBe(400)
  })
})

describe('the shop', () => {
  it('shows the member or non-member price and which option choices are left; an invalid choice is refused', async () => {
    const day = await makeKitDay(db, { seats: 4, lines: [{ qty: 1, stock: 4 }], option: [{ qty: 1, stock: 4 }, { qty: 1, stock: 0 }], memberPrice: 2000, nonMemberPrice: 2600 })
    const [guest] = await makeBuilders(db, base, 1, { member: false })
    const shop = await guest!.client.get('/api/checkout')
    expect(shop.status).toBe(200)
    expect(shop.body.member).toBe(false)
    const offering = shop.body.days.find((d: any) => d.id === day.dayId).offerings[0]
    expect(offering.priceMinor).toBe(2600)
    expect(offering.choices).toEqual([{ optionIds: [day.optionIds[0]], available: true }, { optionIds: [day.optionIds[1]], available: false }])
    const none = await guest!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId, optionIds: [] })
    expect(none.status).toBe(400)
    expect(none.body.message).toMatch(/Choose one option from "Band"/)
    const soldOut = await guest!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId, optionIds: [day.optionIds[1]] })
    expect(soldOut.status).toBe(409)
    expect(soldOut.body.message).toMatch(/sold out: not enough Test band part 2/)
    const ok = await guest!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId, optionIds: [day.optionIds[0]] })
    expect(ok.status).toBe(200)
    const [[order]] = await db.query<any[]>('select * from orders where id = ?', [ok.body.orderId])
    expect(order).toMatchObject({ amount_minor: 2600, member_price: 0 })
    const again = await guest!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId, optionIds: [day.optionIds[0]] })
    expect(again.status).toBe(409)
    expect(again.body.message).toMatch(/checkout in progress/)
  })
})

describe('waiting list', () => {
  it('offers a freed place to the first member waiting, who may decline it to the next, who pays', async () => {
    const day = await makeKitDay(db, { seats: 1, lines: [{ qty: 1, stock: 3 }] })
    const [a, b, c, d] = await makeBuilders(db, base, 4)
    const first = await a!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    expect(first.status).toBe(200)
    const full = await b!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    expect(full.status).toBe(409)
    expect(full.body.data).toMatchObject({ soldOut: 'seats', canWaitlist: true })
    expect((await b!.client.post('/api/waitlist', { buildDayId: day.dayId, offeringId: day.offeringId })).body.position).toBe(1)
    expect((await c!.client.post('/api/waitlist', { buildDayId: day.dayId, offeringId: day.offeringId })).body.position).toBe(2)
    expect((await b!.client.post('/api/waitlist', { buildDayId: day.dayId, offeringId: day.offeringId })).status).toBe(409)
    expect((await a!.client.post('/api/waitlist', { buildDayId: day.dayId, offeringId: day.offeringId })).status).toBe(409)

    const started = Date.now()
    await fetch(`${stripeUrl}/_test/sessions/${sessionIdOf(first.body.url)}/expire`, { method: 'POST' })
    const offerMail = await latestMail(mailUrl, b!.email, { after: started - 1000 })
    expect(offerMail.subject).toMatch(/has come free/)
    const tokenB = offerMail.text.match(/\/shop\/offer\/([\w-]+)/)![1]!
    expect((await b!.client.get(`/api/waitlist/offer/${tokenB}`)).body).toMatchObject({ state: 'offered', buildDay: { id: day.dayId } })
    expect((await d!.client.get(`/api/waitlist/offer/${tokenB}`)).status).toBe(404)
    // While the place is held for b, nobody else can take it.
    expect((await d!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })).status).toBe(409)

    expect((await b!.client.post(`/api/waitlist/offer/${tokenB}/decline`)).body).toEqual({ declined: true })
    const nextMail = await latestMail(mailUrl, c!.email, { after: started - 1000 })
    const tokenC = nextMail.text.match(/\/shop\/offer\/([\w-]+)/)![1]!
    const accepted = await c!.client.post(`/api/waitlist/offer/${tokenC}/accept`)
    expect(accepted.status).toBe(200)
    const acceptedAgain = await c!.client.post(`/api/waitlist/offer/${tokenC}/accept`)
    expect(acceptedAgain.body.url).toBe(accepted.body.url)
    await payAndWait(db, stripeUrl, sessionIdOf(accepted.body.url), accepted.body.orderId)

    const list = await organiser.get(`/api/build-days/${day.dayId}/waitlist`)
    expect(list.body.map((w: any) => [w.email, w.state])).toEqual([[b!.email, 'left'], [c!.email, 'taken']])
    expect((await c!.client.get(`/api/waitlist/offer/${tokenC}`)).body.state).toBe('taken')
  })
})

describe('orders', () => {
  it('the organiser lists, filters and totals orders and exports them with formula-like text neutralised', async () => {
    const day = await makeKitDay(db, { seats: 4, lines: [{ qty: 1, stock: 4 }], memberPrice: 1500 })
    const [x, y] = await makeBuilders(db, base, 2)
    await db.query('update users set name = ? where email = ?', ['=HYPERLINK("http://x.invalid")', x!.email])
    const ox = await x!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    const oy = await y!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    await payAndWait(db, stripeUrl, sessionIdOf(ox.body.url), ox.body.orderId)

    const all = await organiser.get(`/api/orders?buildDayId=${day.dayId}`)
    expect(all.status).toBe(200)
    expect(all.body.rows).toHaveLength(2)
    expect(all.body.totals).toMatchObject({ count: 2, byState: { paid: 1, pending: 1 }, money: { GBP: { paidMinor: 1500, pendingMinor: 1500, refundedMinor: 0 } } })
    const paidOnly = await organiser.get(`/api/orders?buildDayId=${day.dayId}&state=paid`)
    expect(paidOnly.body.rows.map((r: any) => r.id)).toEqual([ox.body.orderId])
    const byName = await organiser.get(`/api/orders?buildDayId=${day.dayId}&q=${encodeURIComponent(y!.email)}`)
    expect(byName.body.rows.map((r: any) => r.id)).toEqual([oy.body.orderId])

    const csv = await fetch(`${base}/api/orders/export?format=csv&buildDayId=${day.dayId}`, { headers: { cookie: organiser.cookie } })
    expect(csv.headers.get('content-type')).toMatch(/text\/csv/)
    const text = await csv.text()
    // OWASP "CSV Injection": a cell starting with = is prefixed with a quote.
    expect(text).toContain(`"'=HYPERLINK(""http://x.invalid"")"`)
    expect(text.split('\r\n')[0]).toMatch(/^Order,State,Payment,Build day/)
    const xlsx = await fetch(`${base}/api/orders/export?format=xlsx&buildDayId=${day.dayId}`, { headers: { cookie: organiser.cookie } })
    expect(xlsx.status).toBe(200)
    const book = new ExcelJS.Workbook()
    await book.xlsx.load(Buffer.from(await xlsx.arrayBuffer()) as any)
    const sheet = book.getWorksheet('Orders')!
    const names = [2, 3].map(r => String(sheet.getRow(r).getCell(9).value))
    expect(names).toContain('\'=HYPERLINK("http://x.invalid")')
    expect(sheet.getRow(1).getCell(1).value).toBe('Order')
  })

  it('builders see only their own orders (404 for anyone else\'s)', async () => {
    const day = await makeKitDay(db, { seats: 4, lines: [{ qty: 1, stock: 4 }] })
    const [x, y] = await makeBuilders(db, base, 2)
    const ox = await x!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    const oy = await y!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    expect((await x!.client.get(`/api/orders/${oy.body.orderId}`)).status).toBe(404)
    expect((await x!.client.get(`/api/checkout/${oy.body.orderId}`)).status).toBe(404)
    expect((await x!.client.post(`/api/checkout/${oy.body.orderId}/cancel`)).status).toBe(404)
    const own = await x!.client.get(`/api/orders/${ox.body.orderId}`)
    expect(own.body).toMatchObject({ id: ox.body.orderId, state: 'pending' })
    expect(own.body.user).toBeUndefined()
    const mine = await x!.client.get('/api/orders/mine')
    expect(mine.body.map((o: any) => o.id)).toEqual([ox.body.orderId])
    const detail = await organiser.get(`/api/orders/${oy.body.orderId}`)
    expect(detail.body.reservations).toEqual([expect.objectContaining({ state: 'held', qty: 1 })])
    const status = await x!.client.get(`/api/checkout/${ox.body.orderId}`)
    expect(status.body.payUrl).toBe(ox.body.url)
  })
})
