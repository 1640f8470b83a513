// Orders: checkout (stock and a seat held in one transaction, then a Checkout Session), the outcome
// of payment events, and cancellation with a refund. See reservations.ts for the locking rules.
import type Stripe from 'stripe'
import { createBagForOrder } from './bags'
import type { KitDemand } from './reservations'
import type { ReconcileLinePart } from '../../shared/utils/reconcile'
import type { PreparedWaitlist } from './waitlist'

type Mail = Parameters<typeof sendMail>[0]
type OrderRow = typeof tables.orders.$inferSelect

/** Stripe lets a Checkout Session live between 30 minutes and 24 hours. */
const MIN_SESSION_S = 30 * 60 + 60
const MAX_SESSION_S = 24 * 3600 - 60

export interface CheckoutInput { buildDayId: number, offeringId: number, optionIds: number[] }

/** What an order is for, in words: kit, revision, options, build day. */
export async function orderSummary(db: Db | Tx, orderId: number) {
  const [row] = await db.select({ order: tables.orders, day: tables.buildDays, rev: tables.revisions, kit: tables.kits, user: { id: tables.users.id, name: tables.users.name, email: tables.users.email, member: tables.users.member } })
    .from(tables.orders)
    .innerJoin(tables.buildDays, eq(tables.buildDays.id, tables.orders.buildDayId))
    .innerJoin(tables.offerings, eq(tables.offerings.id, tables.orders.offeringId))
    .innerJoin(tables.revisions, eq(tables.revisions.id, tables.offerings.revisionId))
    .innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId))
    .innerJoin(tables.users, eq(tables.users.id, tables.orders.userId))
    .where(eq(tables.orders.id, orderId))
  if (!row) return null
  const ids = row.order.optionIds ?? []
  const opts = ids.length ? await db.select({ id: tables.options.id, name: tables.options.name }).from(tables.options).where(inArray(tables.options.id, ids)) : []
  const optionNames = ids.map(id => opts.find(o => o.id === id)?.name ?? `option ${id}`)
  const title = `${row.kit.name} (revision ${row.rev.label})${optionNames.length ? ` with ${optionNames.join(', ')}` : ''}`
  return { ...row, optionNames, title }
}

type Summary = NonNullable<Awaited<ReturnType<typeof orderSummary>>>

function summaryLines(s: Summary) {
  return [
    `Order: #${s.order.id}`,
    `Kit: ${s.title}`,
    `Build day: ${s.day.name}, ${s.day.date}, ${s.day.venue}`,
    ...(s.order.seat ? [`Seat: ${s.order.seat}`] : []),
    `Price: ${formatMoney(s.order.amountMinor, s.order.currency)} (${s.order.memberPrice ? 'member' : 'non-member'} price)`,
  ].join('\n')
}

export function confirmationMail(s: Summary): Mail {
  return {
    to: s.user.email,
    subject: `Your place at ${s.day.name} is confirmed (order #${s.order.id})`,
    text: `Hello ${s.user.name},\n\nThank you: your payment went through and your kit is set aside for you.\n\n${summaryLines(s)}\n\nYour orders: ${appUrl('/shop')}\n\nSee you on the day.\n`,
  }
}

function refundMail(s: Summary, why: string): Mail {
  return {
    to: s.user.email,
    subject: `Your order #${s.order.id} for ${s.day.name} was refunded`,
    text: `Hello ${s.user.name},\n\n${why}\nThe full amount, ${formatMoney(s.order.amountMinor, s.order.currency)}, goes back to your card.\n\n${summaryLines(s)}\n\nThe shop: ${appUrl('/shop')}\n`,
  }
}

export async function sendMails(mails: Mail[]) {
  for (const m of mails) await sendMailQuietly(m)
}

async function loadSaleContext(db: Db, input: CheckoutInput) {
  const [row] = await db.select({ day: tables.buildDays, offering: tables.offerings })
    .from(tables.offerings).innerJoin(tables.buildDays, eq(tables.buildDays.id, tables.offerings.buildDayId))
    .where(and(eq(tables.offerings.id, input.offeringId), eq(tables.offerings.buildDayId, input.buildDayId)))
  if (!row) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'That kit is not offered at that build day' })
  const now = Date.now()
  if (now < row.day.salesOpenAt.getTime()) throw createError({ statusCode: 409, statusMessage: 'Not on sale', message: `Sales for ${row.day.name} open on ${row.day.salesOpenAt.toISOString().slice(0, 10)}` })
  if (now > row.day.salesCloseAt.getTime()) throw createError({ statusCode: 409, statusMessage: 'Not on sale', message: `Sales for ${row.day.name} have closed` })
  const notAllowed = input.optionIds.filter(id => !row.offering.allowedOptionIds.includes(id))
  if (notAllowed.length) {
    const message = 'That option is not offered at this build day: choose another'
    throw createError({ statusCode: 400, statusMessage: 'Invalid input', message, data: { fields: { optionIds: message } } })
  }
  return row
}

/** A pending order of this member at the day whose hold is live, or a paid one. */
export async function liveOrderOf(tx: Pick<Tx, 'select'>, buildDayId: number, userId: number, now = new Date()) {
  const O = tables.orders
  const [row] = await tx.select({ id: O.id, state: O.state }).from(O).where(and(eq(O.buildDayId, buildDayId), eq(O.userId, userId),
    or(eq(O.state, 'paid'), and(eq(O.state, 'pending'), gt(O.holdExpiresAt, now))))).limit(1)
  return row
}

const seatsSoldOut = (name: string) => `Every seat at ${name} is taken. Join the waiting list and you will be e-mailed if a place comes free.`
async function stockSoldOut(db: Pick<Tx, 'select'>, shortfall: ReconcileLinePart[]) {
  return `This kit is sold out: not enough ${await describeShortfall(db, shortfall)}. Join the waiting list and you will be e-mailed if one comes free.`
}

function soldOut(message: string, reason: 'seats' | 'stock') {
  return createError({ statusCode: 409, statusMessage: 'Sold out', message, data: { soldOut: reason, canWaitlist: true } })
}

/**
 * Starts a checkout: in one transaction holds one kit's stock (stand-ins allowed) and a seat and
 * creates the pending order; then creates the Checkout Session. When the payment service fails the
 * order and its reservations are released again and a 502/503 explains it.
 */
export async function startCheckout(user: { id: number, email: string }, input: CheckoutInput) {
  const db = useDb()
  const { day, offering } = await loadSaleContext(db, input)
  const demand = await kitDemand(db, offering.revisionId, input.optionIds)
  const [member] = await db.select({ member: tables.users.member }).from(tables.users).where(eq(tables.users.id, user.id))
  const isMember = member?.member ?? false
  const holdS = Math.min(Math.max(day.holdMinutes * 60, MIN_SESSION_S), MAX_SESSION_S)
  // A quick look without locks turns most requests away once a day has sold out; the locked check below decides.
  if (await seatsTaken(db, day.id) >= day.seats) throw soldOut(seatsSoldOut(day.name), 'seats')
  const glance = await allocateKit(db, demand)
  if (!glance.ok) throw soldOut(await stockSoldOut(db, glance.shortfall), 'stock')

  const orderId = await sellingTx(db, async (tx) => {
    const locked = await lockBuildDay(tx, day.id)
    const now = new Date()
    const mine = await liveOrderOf(tx, day.id, user.id, now)
    if (mine) {
      throw createError({
        statusCode: 409, statusMessage: 'Already booked', data: { orderId: mine.id },
        message: mine.state === 'paid' ? 'You already have a place at this build day' : 'You already have a checkout in progress for this build day: continue or cancel it under "Your orders"',
      })
    }
    if (await seatsTaken(tx, day.id, now) >= locked.seats) throw soldOut(seatsSoldOut(day.name), 'seats')
    await lockPartStock(tx, demand.partIds)
    const alloc = await allocateKit(tx, demand)
    if (!alloc.ok) throw soldOut(await stockSoldOut(tx, alloc.shortfall), 'stock')
    const [row] = await tx.insert(tables.orders).values({
      buildDayId: day.id, offeringId: offering.id, userId: user.id, optionIds: input.optionIds, state: 'pending',
      amountMinor: isMember ? offering.memberPriceMinor : offering.nonMemberPriceMinor, currency: day.currency, memberPrice: isMember,
      holdExpiresAt: new Date(now.getTime() + holdS * 1000),
    }).$returningId()
    await insertReservations(tx, row!.id, alloc.allocation, 'held')
    return row!.id
  })

  try {
    return await openCheckoutSession(orderId, user.email)
  }
  catch (err) {
    await sellingTx(db, tx => releaseOrder(tx, orderId, ['pending'], 'cancelled', 'The card payment could not be started'))
    throw paymentServiceError(err, 'Starting the card payment', 'nothing was reserved or charged')
  }
}

/**
 * Creates the Checkout Session of a pending order (or returns the open one): it expires with the
 * hold (at least 30 minutes ahead, as Stripe requires), and the hold is set to the session's expiry.
 */
export async function openCheckoutSession(orderId: number, email: string) {
  const db = useDb()
  const s = await orderSummary(db, orderId)
  if (!s || s.order.state !== 'pending') throw createError({ statusCode: 409, statusMessage: 'Not pending', message: 'This order is no longer waiting for payment' })
  const stripe = useStripe()
  if (s.order.stripeSessionId) {
    const open = await stripe.checkout.sessions.retrieve(s.order.stripeSessionId)
    if (open.status === 'open' && open.url) return { orderId, url: open.url, sessionId: open.id }
  }
  const nowS = Math.floor(Date.now() / 1000)
  const holdS = Math.floor((s.order.holdExpiresAt?.getTime() ?? 0) / 1000)
  const expiresAt = Math.min(Math.max(holdS, nowS + MIN_SESSION_S), nowS + MAX_SESSION_S)
  const session = await stripe.checkout.sessions.create({
    mode: 'payment',
    line_items: [{ quantity: 1, price_data: { currency: s.order.currency.toLowerCase(), unit_amount: s.order.amountMinor, product_data: { name: `${s.title}, ${s.day.name}` } } }],
    client_reference_id: String(orderId),
    customer_email: email,
    metadata: { order_id: String(orderId), build_day_id: String(s.day.id) },
    payment_intent_data: { metadata: { order_id: String(orderId) } },
    success_url: appUrl(`/shop/success?order=${orderId}&session_id={CHECKOUT_SESSION_ID}`),
    cancel_url: appUrl(`/shop/cancelled?order=${orderId}`),
    expires_at: expiresAt,
  })
  const O = tables.orders
  const [res] = await db.update(O).set({ stripeSessionId: session.id, holdExpiresAt: new Date(expiresAt * 1000) })
    .where(and(eq(O.id, orderId), eq(O.state, 'pending'), s.order.stripeSessionId ? eq(O.stripeSessionId, s.order.stripeSessionId) : isNull(O.stripeSessionId)))
  if (res.affectedRows !== 1) {
    // Someone opened a session for this order at the same moment: keep theirs.
    await stripe.checkout.sessions.expire(session.id).catch(() => undefined)
    const [again] = await db.select({ sessionId: O.stripeSessionId }).from(O).where(eq(O.id, orderId))
    const other = again?.sessionId ? await stripe.checkout.sessions.retrieve(again.sessionId) : null
    if (!other?.url || other.status !== 'open') throw createError({ statusCode: 409, statusMessage: 'Not pending', message: 'This order is no longer waiting for payment' })
    return { orderId, url: other.url, sessionId: other.id }
  }
  return { orderId, url: session.url!, sessionId: session.id }
}

/** Expires a session at the payment service without failing the caller (it may be paid or gone already). */
export async function expireSessionQuietly(sessionId: string | null | undefined) {
  if (!sessionId) return
  try {
    await useStripe().checkout.sessions.expire(sessionId)
  }
  catch (err) {
    const e = err as { message?: string }
    console.warn(`[stripe] could not expire ${sessionId}: ${e.message}`)
  }
}

/** Releases a pending order (the member gave up, or its hold ran out) and offers the place to the waiting list. */
export async function releasePending(orderId: number, to: 'expired' | 'cancelled', reason: string) {
  const db = useDb()
  const [order] = await db.select().from(tables.orders).where(eq(tables.orders.id, orderId))
  if (!order) return false
  const prepared = await prepareWaitlist(db, order.buildDayId)
  const { released, mails } = await sellingTx(db, async (tx) => {
    const day = await lockBuildDay(tx, order.buildDayId)
    const released = await releaseOrder(tx, orderId, ['pending'], to, reason)
    return { released, mails: released ? await offerWaitlist(tx, day, prepared) : [] }
  })
  if (released) await expireSessionQuietly(order.stripeSessionId)
  await sendMails(mails)
  return released
}

// ---- payment events ----

export interface EventOutcome { outcome: string, orderId?: number }

/** Handles one verified Stripe event; each event id is acted on once (a replay changes nothing). */
export async function handleStripeEvent(event: Stripe.Event): Promise<EventOutcome> {
  const db = useDb()
  if (event.type !== 'checkout.session.completed' && event.type !== 'checkout.session.expired') {
    return recordOnly(db, event, 'acknowledged, not used')
  }
  const session = event.data.object as Stripe.Checkout.Session
  const orderId = Number(session.metadata?.order_id ?? session.client_reference_id)
  const [order] = Number.isSafeInteger(orderId) && orderId > 0 ? await db.select().from(tables.orders).where(eq(tables.orders.id, orderId)) : []
  if (!order || (order.stripeSessionId && order.stripeSessionId !== session.id)) {
    console.warn(`[stripe] ${event.type} ${event.id} for session ${session.id}: no matching order, acknowledged`)
    return recordOnly(db, event, `unknown session ${session.id}`)
  }
  const demand = event.type === 'checkout.session.completed' && order.state !== 'pending' && order.state !== 'paid'
    ? await kitDemandFor(db, order).catch(() => null)
    : null
  const prepared = event.type === 'checkout.session.expired' ? await prepareWaitlist(db, order.buildDayId) : new Map()
  const after: Mail[] = []
  const result = await sellingTx(db, async (tx) => {
    after.length = 0
    if (!await recordEvent(tx, event)) return { outcome: 'duplicate: already handled', orderId }
    const day = await lockBuildDay(tx, order.buildDayId)
    const [current] = await tx.select().from(tables.orders).where(eq(tables.orders.id, orderId)).for('update')
    const outcome = event.type === 'checkout.session.completed'
      ? await onCompleted(tx, day, current!, session, demand, after)
      : await onExpired(tx, day, current!, prepared, after)
    await tx.update(tables.stripeEvents).set({ outcome: outcome.slice(0, 255) }).where(eq(tables.stripeEvents.id, event.id))
    return { outcome, orderId }
  })
  await sendMails(after)
  return result
}

async function kitDemandFor(db: Db, order: OrderRow) {
  const [offering] = await db.select().from(tables.offerings).where(eq(tables.offerings.id, order.offeringId))
  return kitDemand(db, offering!.revisionId, order.optionIds ?? [])
}

/** Inserts the event id; false when it is already there (the primary key makes the check and the claim one step). */
async function recordEvent(tx: Tx, event: Stripe.Event) {
  try {
    await tx.insert(tables.stripeEvents).values({ id: event.id, type: event.type, outcome: 'processing' })
    return true
  }
  catch (err) {
    const code = (err as { cause?: { code?: string } }).cause?.code ?? (err as { code?: string }).code
    if (code === 'ER_DUP_ENTRY') return false
    throw err
  }
}

async function recordOnly(db: Db, event: Stripe.Event, outcome: string): Promise<EventOutcome> {
  const fresh = await db.transaction(async (tx) => {
    if (!await recordEvent(tx, event)) return false
    await tx.update(tables.stripeEvents).set({ outcome: outcome.slice(0, 255) }).where(eq(tables.stripeEvents.id, event.id))
    return true
  })
  return { outcome: fresh ? outcome : 'duplicate: already handled' }
}

type DayRow = typeof tables.buildDays.$inferSelect

/**
 * Payment completed. A pending order becomes paid (its held stock confirmed, a seat given, a bag
 * made). A payment for an order whose hold had already lapsed or been cancelled takes the stock
 * and a seat again if both are still there; otherwise the payment is refunded at once and the
 * member told (inside this transaction, with an idempotency key, so a failed refund is retried).
 */
async function onCompleted(tx: Tx, day: DayRow, order: OrderRow, session: Stripe.Checkout.Session, demand: KitDemand | null, after: Mail[]) {
  if (order.state === 'paid') return 'already paid'
  if (order.state === 'refunded') return 'already refunded'
  if (session.payment_status !== 'paid') return `completed but not paid (${session.payment_status}): nothing to do yet`
  const paymentIntent = typeof session.payment_intent === 'string' ? session.payment_intent : session.payment_intent?.id ?? null
  const seat = await freeSeat(tx, day.id, day.seats)
  let revived = false
  if (order.state !== 'pending') {
    const taken = await seatsTaken(tx, day.id, new Date(), order.id)
    if (seat !== null && taken < day.seats && demand) {
      await lockPartStock(tx, demand.partIds)
      const alloc = await allocateKit(tx, demand)
      if (alloc.ok) {
        await insertReservations(tx, order.id, alloc.allocation, 'confirmed')
        revived = true
      }
    }
    if (!revived) return refundLatePayment(tx, order, paymentIntent, after)
  }
  else if (seat === null) {
    await releaseOrder(tx, order.id, ['pending'], 'cancelled', 'No seat left when the payment arrived')
    return refundLatePayment(tx, { ...order, state: 'cancelled' }, paymentIntent, after)
  }
  const O = tables.orders
  await tx.update(O).set({ state: 'paid', paidAt: new Date(), seat, stripePaymentIntent: paymentIntent, stripeSessionId: session.id, cancelledAt: null, cancelReason: null })
    .where(eq(O.id, order.id))
  await tx.update(tables.reservations).set({ state: 'confirmed' })
    .where(and(eq(tables.reservations.orderId, order.id), eq(tables.reservations.state, 'held')))
  await tx.update(tables.waitlist).set({ state: 'taken' })
    .where(and(eq(tables.waitlist.orderId, order.id), eq(tables.waitlist.state, 'offered')))
  await tx.update(tables.waitlist).set({ state: 'left' })
    .where(and(eq(tables.waitlist.buildDayId, day.id), eq(tables.waitlist.userId, order.userId), eq(tables.waitlist.state, 'waiting')))
  await createBagForOrder(tx, order.id)
  const s = await orderSummary(tx, order.id)
  if (s) after.push(confirmationMail(s))
  return revived ? `paid after the hold had lapsed: stock and seat ${seat} taken again` : `paid, seat ${seat}`
}

async function refundLatePayment(tx: Tx, order: OrderRow, paymentIntent: string | null, after: Mail[]) {
  if (!paymentIntent) return `payment for ${order.state} order has no payment intent: nothing to refund`
  const refund = await useStripe().refunds.create({ payment_intent: paymentIntent, metadata: { order_id: String(order.id) } }, { idempotencyKey: `kw-late-${order.id}-${paymentIntent}` })
  const reason = 'Paid after the hold had lapsed and the kit or seat had gone: refunded'
  await tx.update(tables.orders).set({ state: 'refunded', stripePaymentIntent: paymentIntent, cancelReason: reason, cancelledAt: new Date() })
    .where(eq(tables.orders.id, order.id))
  await audit(tx, null, 'order.refund', 'order', order.id, { refundId: refund.id, amountMinor: order.amountMinor, reason })
  const s = await orderSummary(tx, order.id)
  if (s) after.push(refundMail(s, 'Your payment arrived after the time we could hold your kit, and meanwhile the last one (or the last seat) was taken, so we have refunded you.'))
  return `late payment refunded (${refund.id})`
}

async function onExpired(tx: Tx, day: DayRow, order: OrderRow, prepared: PreparedWaitlist, after: Mail[]) {
  if (order.state !== 'pending') return `nothing to do: order is ${order.state}`
  await releaseOrder(tx, order.id, ['pending'], 'expired', 'The checkout session expired before payment')
  after.push(...await offerWaitlist(tx, day, prepared))
  return 'hold released'
}

// ---- organiser cancels ----

/**
 * Cancels an order. A paid one is refunded in full through the payment service first (nothing
 * changes if that fails), then its stock and seat are released, the member is e-mailed, an audit row
 * is written and the place is offered to the waiting list. A pending one is simply released.
 */
export async function cancelOrder(organiserId: number, orderId: number, reason: string) {
  const db = useDb()
  const [order] = await db.select().from(tables.orders).where(eq(tables.orders.id, orderId))
  if (!order) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such order' })
  if (order.state === 'pending') {
    const released = await releasePending(orderId, 'cancelled', reason)
    if (released) await audit(db, organiserId, 'order.cancel', 'order', orderId, { reason })
    return { state: released ? 'cancelled' : order.state, refundId: null }
  }
  if (order.state !== 'paid') throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `This order is ${order.state}: only paid or pending orders can be cancelled` })
  if (!order.stripePaymentIntent) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'This order has no card payment on record, so it cannot be refunded here' })
  let refund: Stripe.Refund
  try {
    refund = await useStripe().refunds.create({ payment_intent: order.stripePaymentIntent, reason: 'requested_by_customer', metadata: { order_id: String(orderId) } },
      { idempotencyKey: `kw-cancel-${orderId}-${order.stripePaymentIntent}` })
  }
  catch (err) {
    throw paymentServiceError(err, 'Refunding the order', 'the order is unchanged')
  }
  const prepared = await prepareWaitlist(db, order.buildDayId)
  const { changed, mails } = await sellingTx(db, async (tx) => {
    const day = await lockBuildDay(tx, order.buildDayId)
    const changed = await releaseOrder(tx, orderId, ['paid'], 'refunded', reason)
    if (!changed) return { changed, mails: [] as Mail[] }
    await audit(tx, organiserId, 'order.refund', 'order', orderId, { refundId: refund.id, amountMinor: refund.amount, reason })
    const s = await orderSummary(tx, orderId)
    return { changed, mails: [...(s ? [refundMail(s, `Your order has been cancelled by the organisers: ${reason}`)] : []), ...await offerWaitlist(tx, day, prepared)] }
  })
  await sendMails(mails)
  return { state: changed ? 'refunded' : order.state, refundId: refund.id }
}

// ---- lapsed holds ----

/**
 * Releases pending orders whose hold has run out (each by a guarded UPDATE, so several app
 * processes can sweep at once), then offers any room left at days with a waiting list.
 */
export async function sweepSelling(now = new Date()) {
  const db = useDb()
  const O = tables.orders
  const lapsed = await db.select({ id: O.id }).from(O).where(and(eq(O.state, 'pending'), lt(O.holdExpiresAt, now))).orderBy(O.holdExpiresAt).limit(50)
  let released = 0
  for (const o of lapsed) {
    if (await releasePending(o.id, 'expired', 'The time to pay ran out')) released++
  }
  const days = await db.selectDistinct({ id: tables.waitlist.buildDayId }).from(tables.waitlist).where(eq(tables.waitlist.state, 'waiting'))
  let offered = 0
  for (const d of days) {
    const [day] = await db.select().from(tables.buildDays).where(eq(tables.buildDays.id, d.id))
    if (!day || day.seats - await seatsTaken(db, d.id, now) <= 0) continue
    const prepared = await prepareWaitlist(db, d.id)
    const mails = await sellingTx(db, async (tx) => offerWaitlist(tx, await lockBuildDay(tx, d.id), prepared))
    offered += mails.length
    await sendMails(mails)
  }
  return { released, offered }
}

// ---- lists ----

export interface OrderFilters { buildDayId?: number, state?: OrderState, member?: boolean, kitId?: number, q?: string, userId?: number, orderId?: number }

const PAYMENT_WORDS: Record<OrderState, string> = { pending: 'awaiting payment', paid: 'paid by card', cancelled: 'not paid', expired: 'not paid', refunded: 'refunded' }

/** Orders with their member, build day, kit and option names, newest first. */
export async function listOrders(db: Db, f: OrderFilters = {}) {
  const O = tables.orders
  const U = tables.users
  const like = f.q ? `%${f.q.replace(/[\\%_]/g, m => `\\${m}`)}%` : null
  const rows = await db.select({ order: O, day: { id: tables.buildDays.id, name: tables.buildDays.name, date: tables.buildDays.date }, kit: { id: tables.kits.id, name: tables.kits.name }, revision: tables.revisions.label, user: { id: U.id, name: U.name, email: U.email, member: U.member } })
    .from(O)
    .innerJoin(tables.buildDays, eq(tables.buildDays.id, O.buildDayId))
    .innerJoin(tables.offerings, eq(tables.offerings.id, O.offeringId))
    .innerJoin(tables.revisions, eq(tables.revisions.id, tables.offerings.revisionId))
    .innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId))
    .innerJoin(U, eq(U.id, O.userId))
    .where(and(
      f.buildDayId ? eq(O.buildDayId, f.buildDayId) : undefined,
      f.state ? eq(O.state, f.state) : undefined,
      f.member === undefined ? undefined : eq(O.memberPrice, f.member),
      f.kitId ? eq(tables.kits.id, f.kitId) : undefined,
      f.userId ? eq(O.userId, f.userId) : undefined,
      f.orderId ? eq(O.id, f.orderId) : undefined,
      like ? or(sql`${U.name} like ${like}`, sql`${U.email} like ${like}`) : undefined,
    ))
    .orderBy(desc(O.createdAt), desc(O.id))
    .limit(5000)
  const optionIds = [...new Set(rows.flatMap(r => r.order.optionIds ?? []))]
  const opts = optionIds.length ? await db.select({ id: tables.options.id, name: tables.options.name }).from(tables.options).where(inArray(tables.options.id, optionIds)) : []
  return rows.map(r => ({
    ...r.order,
    payment: PAYMENT_WORDS[r.order.state],
    optionNames: (r.order.optionIds ?? []).map(id => opts.find(o => o.id === id)?.name ?? `option ${id}`),
    buildDay: r.day, kit: r.kit, revision: r.revision, user: r.user,
  }))
}

export type OrderListRow = Awaited<ReturnType<typeof listOrders>>[number]

/** Counts per state and money per currency over some orders. */
export function orderTotals(rows: OrderListRow[]) {
  const byState: Record<string, number> = {}
  const money: Record<string, { paidMinor: number, refundedMinor: number, pendingMinor: number }> = {}
  for (const r of rows) {
    byState[r.state] = (byState[r.state] ?? 0) + 1
    const m = (money[r.currency] ??= { paidMinor: 0, refundedMinor: 0, pendingMinor: 0 })
    if (r.state === 'paid') m.paidMinor += r.amountMinor
    if (r.state === 'refunded') m.refundedMinor += r.amountMinor
    if (r.state === 'pending') m.pendingMinor += r.amountMinor
  }
  return { count: rows.length, byState, money }
}

/** A member's own orders (or one of them), without other members' data. */
export async function ordersOfMember(db: Db, userId: number, orderId?: number) {
  const rows = await listOrders(db, { userId, orderId })
  return rows.map(r => ({
    id: r.id, state: r.state, payment: r.payment, amountMinor: r.amountMinor, currency: r.currency, memberPrice: r.memberPrice, seat: r.seat,
    buildDay: r.buildDay, kit: r.kit, revision: r.revision, optionNames: r.optionNames, holdExpiresAt: r.holdExpiresAt, paidAt: r.paidAt,
    cancelledAt: r.cancelledAt, cancelReason: r.cancelReason, createdAt: r.createdAt, stripeSessionId: r.stripeSessionId,
  }))
}

/** The export table: one header row and one row per order (text cells are neutralised by the writers). */
export function orderExportRows(rows: OrderListRow[]): (string | number | null)[][] {
  return [
    ['Order', 'State', 'Payment', 'Build day', 'Date', 'Kit', 'Revision', 'Options', 'Member', 'E-mail', 'Member price', 'Seat', 'Amount', 'Currency', 'Ordered', 'Paid', 'Cancel reason'],
    ...rows.map(r => [
      r.id, r.state, r.payment, r.buildDay.name, r.buildDay.date, r.kit.name, r.revision, r.optionNames.join(', '), r.user.name, r.user.email,
      r.memberPrice ? 'yes' : 'no', r.seat ?? null, toMajorUnits(r.amountMinor, r.currency), r.currency, r.createdAt.toISOString(), r.paidAt?.toISOString() ?? null, r.cancelReason ?? null,
    ]),
  ]
}

/** 1250 GBP → 12.5 (a number, so spreadsheets can add it up). */
function toMajorUnits(minor: number, currency: string) {
  const digits = new Intl.NumberFormat('en-GB', { style: 'currency', currency }).resolvedOptions().maximumFractionDigits ?? 2
  return minor / 10 ** digits
}
