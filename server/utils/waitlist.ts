// The waiting list. When stock or seats free up, the first waiting member whose choice fits is
// offered the place: a pending order holds one kit's stock and a seat for them (as a checkout does)
// and they are e-mailed a link to pay within the offer time. Offers are made under the build day
// lock, in the same transaction that released the place, so nobody else can take it in between.
import type { KitDemand } from './reservations'
import type { CheckoutInput } from './orders'

type Mail = Parameters<typeof sendMail>[0]
type DayRow = typeof tables.buildDays.$inferSelect

/** Waiting entry id → its kit demand, worked out before the transaction (BOM reads use their own connection). */
export type PreparedWaitlist = Map<number, KitDemand>

const DEFAULT_OFFER_MINUTES = 24 * 60

export async function prepareWaitlist(db: Db, buildDayId: number): Promise<PreparedWaitlist> {
  const W = tables.waitlist
  const entries = await db.select({ id: W.id, optionIds: W.optionIds, revisionId: tables.offerings.revisionId }).from(W)
    .innerJoin(tables.offerings, eq(tables.offerings.id, W.offeringId))
    .where(and(eq(W.buildDayId, buildDayId), eq(W.state, 'waiting'))).orderBy(W.createdAt, W.id).limit(50)
  const out: PreparedWaitlist = new Map()
  if (!entries.length) return out
    for (const e of entries) {
    try {
      out.set(e.id, await kitDemand(db, e.revisionId, e.optionIds ?? []))
    }
    catch {
      // A choice that no longer makes a kit stays waiting; the organiser sees it on the list.
    }
  }
  return out
}

async function offerMinutes(tx: Pick<Tx, 'select'>) {
  const [row] = await tx.select().from(tables.settings).where(eq(tables.settings.key, 'waitlist.offerMinutes'))
  const n = Number(row?.value)
  return Number.isFinite(n) && n >= 30 ? n : DEFAULT_OFFER_MINUTES
}

/** Offers freed places to waiting members in turn (caller holds the build day lock); returns the e-mails to send after commit. */
export async function offerWaitlist(tx: Tx, day: DayRow, prepared: PreparedWaitlist, now = new Date()): Promise<Mail[]> {
  if (!prepared.size) return []
  const W = tables.waitlist
  const waiting = await tx.select().from(W).where(and(eq(W.buildDayId, day.id), eq(W.state, 'waiting'))).orderBy(W.createdAt, W.id)
  let seatsLeft = day.seats - await seatsTaken(tx, day.id, now)
  const minutes = await offerMinutes(tx)
  const mails: Mail[] = []
  for (const w of waiting) {
    if (seatsLeft <= 0) break
    const demand = prepared.get(w.id)
    if (!demand) continue
    if (await liveOrderOf(tx, day.id, w.userId, now)) {
      await tx.update(W).set({ state: 'left' }).where(and(eq(W.id, w.id), eq(W.state, 'waiting')))
      continue
    }
    await lockPartStock(tx, demand.partIds)
    const alloc = await allocateKit(tx, demand)
    if (!alloc.ok) continue
    const [offering] = await tx.select().from(tables.offerings).where(eq(tables.offerings.id, w.offeringId))
    const [user] = await tx.select().from(tables.users).where(eq(tables.users.id, w.userId))
    if (!offering || !user) continue
    const holdExpiresAt = new Date(now.getTime() + minutes * 60_000)
    const [order] = await tx.insert(tables.orders).values({
      buildDayId: day.id, offeringId: offering.id, userId: user.id, optionIds: w.optionIds, state: 'pending',
      amountMinor: user.member ? offering.memberPriceMinor : offering.nonMemberPriceMinor, currency: day.currency, memberPrice: user.member, holdExpiresAt,
    }).$returningId()
    await insertReservations(tx, order!.id, alloc.allocation, 'held')
    const { token, hash } = newToken()
    await tx.update(W).set({ state: 'offered', holdTokenHash: hash, holdExpiresAt, orderId: order!.id }).where(and(eq(W.id, w.id), eq(W.state, 'waiting')))
    seatsLeft--
    const s = await orderSummary(tx, order!.id)
    mails.push({
      to: user.email,
      subject: `A place at ${day.name} has come free for you`,
      text: `Hello ${user.name},\n\nA place has come free and we are holding it for you until ${holdExpiresAt.toUTCString()}.\n\n${s ? `${s.title}, ${formatMoney(s.order.amountMinor, s.order.currency)}` : ''}\n\nTo take it, open this link and pay by card:\n${appUrl(`/shop/offer/${token}`)}\n\nIf you no longer want it, open the link and choose "No thanks" so the next person can have it.\n`,
    })
  }
  return mails
}

/** Puts a member on the waiting list for a kit choice, only when it cannot be bought now. */
export async function joinWaitlist(user: { id: number }, input: CheckoutInput) {
  const db = useDb()
  const [row] = await db.select({ day: tables.buildDays, offering: tables.offerings }).from(tables.offerings)
    .innerJoin(tables.buildDays, eq(tables.buildDays.id, tables.offerings.buildDayId))
    .where(and(eq(tables.offerings.id, input.offeringId), eq(tables.offerings.buildDayId, input.buildDayId)))
  if (!row) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'That kit is not offered at that build day' })
  if (Date.now() > row.day.salesCloseAt.getTime()) throw createError({ statusCode: 409, statusMessage: 'Closed', message: `Sales for ${row.day.name} have closed` })
  if (input.optionIds.some(id => !row.offering.allowedOptionIds.includes(id))) {
    throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'That option is not offered at this build day', data: { fields: { optionIds: 'That option is not offered at this build day' } } })
  }
  const demand = await kitDemand(db, row.offering.revisionId, input.optionIds)
  if (await liveOrderOf(db, row.day.id, user.id)) throw createError({ statusCode: 409, statusMessage: 'Already booked', message: 'You already have a place (or a checkout in progress) at this build day' })
  const W = tables.waitlist
  const [already] = await db.select({ id: W.id }).from(W).where(and(eq(W.buildDayId, row.day.id), eq(W.userId, user.id), inArray(W.state, ['waiting', 'offered'])))
  if (already) throw createError({ statusCode: 409, statusMessage: 'Already waiting', message: 'You are already on the waiting list for this build day' })
  const seatsLeft = row.day.seats - await seatsTaken(db, row.day.id)
  if (seatsLeft > 0 && await kitsAvailable(db, demand) > 0) {
    throw createError({ statusCode: 409, statusMessage: 'Available', message: 'This kit is still available: you can buy it now' })
  }
  const [entry] = await db.insert(W).values({ buildDayId: row.day.id, offeringId: row.offering.id, userId: user.id, optionIds: input.optionIds }).$returningId()
  const [ahead] = await db.select({ n: sql<number>`count(*)` }).from(W).where(and(eq(W.buildDayId, row.day.id), eq(W.state, 'waiting'), lte(W.id, entry!.id)))
  return { id: entry!.id, position: Number(ahead?.n ?? 1) }
}

async function offerFor(userId: number, token: string) {
  const W = tables.waitlist
  const [entry] = await useDb().select().from(W).where(eq(W.holdTokenHash, hashToken(token)))
  if (!entry || entry.userId !== userId) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'This offer link is not valid for you. Sign in as the member it was sent to.' })
  return entry
}

/** The offer behind an e-mailed link (the member's own only). */
export async function showOffer(userId: number, token: string) {
  const entry = await offerFor(userId, token)
  const s = entry.orderId ? await orderSummary(useDb(), entry.orderId) : null
  const live = entry.state === 'offered' && s?.order.state === 'pending' && (s.order.holdExpiresAt?.getTime() ?? 0) > Date.now()
  return {
    state: live ? 'offered' : entry.state === 'taken' ? 'taken' : 'lapsed',
    holdExpiresAt: entry.holdExpiresAt,
    orderId: entry.orderId,
    title: s?.title ?? null,
    buildDay: s ? { id: s.day.id, name: s.day.name, date: s.day.date, venue: s.day.venue } : null,
    amountMinor: s?.order.amountMinor ?? null,
    currency: s?.order.currency ?? null,
  }
}

/** Takes up an offer: opens the card payment for the order that holds the place. */
export async function acceptOffer(user: { id: number, email: string }, token: string) {
  const offer = await showOffer(user.id, token)
  if (offer.state !== 'offered') throw createError({ statusCode: 410, statusMessage: 'Offer lapsed', message: 'This offer has lapsed or was already used. You can join the waiting list again from the shop.' })
  try {
    return await openCheckoutSession(offer.orderId!, user.email)
  }
  catch (err) {
    if ((err as { statusCode?: number }).statusCode === 409) throw err
    throw paymentServiceError(err, 'Starting the card payment', 'your place is still held until the offer runs out')
  }
}

/** Declines an offer: the place goes to the next member waiting. */
export async function declineOffer(userId: number, token: string) {
  const entry = await offerFor(userId, token)
  const W = tables.waitlist
  const [res] = await useDb().update(W).set({ state: 'left' }).where(and(eq(W.id, entry.id), eq(W.state, 'offered')))
  if (res.affectedRows !== 1) throw createError({ statusCode: 410, statusMessage: 'Offer lapsed', message: 'This offer has already lapsed or been used' })
  if (entry.orderId) await releasePending(entry.orderId, 'cancelled', 'Declined the waiting-list offer')
  return { declined: true }
}

/** Leaves the waiting list (an open offer is declined). */
export async function leaveWaitlist(userId: number, id: number) {
  const W = tables.waitlist
  const [entry] = await useDb().select().from(W).where(and(eq(W.id, id), eq(W.userId, userId)))
  if (!entry) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such waiting-list entry' })
  if (entry.state === 'offered') {
    await useDb().update(W).set({ state: 'left' }).where(and(eq(W.id, id), eq(W.state, 'offered')))
    if (entry.orderId) await releasePending(entry.orderId, 'cancelled', 'Left the waiting list')
  }
  else if (entry.state === 'waiting') {
    await useDb().update(W).set({ state: 'left' }).where(and(eq(W.id, id), eq(W.state, 'waiting')))
  }
  return { left: true }
}
