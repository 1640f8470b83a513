/** The shop: build days still selling, their kits and options at this member's price, what is left, and the member's own orders and waiting-list places. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const db = useDb()
  const now = new Date()
  const [me] = await db.select({ member: tables.users.member }).from(tables.users).where(eq(tables.users.id, user.id))
  const days = await db.select().from(tables.buildDays).where(gt(tables.buildDays.salesCloseAt, now)).orderBy(tables.buildDays.date)
  const views = await offeringViews(db, days.map(d => d.id))
  const onSale = await Promise.all(days.map(async (day) => {
    const offerings = views.filter(o => o.buildDayId === day.id)
    const open = day.salesOpenAt.getTime() <= now.getTime()
    const avail = open ? await availabilityOf(db, day, offerings) : null
    return {
      id: day.id, name: day.name, date: day.date, venue: day.venue, currency: day.currency, salesOpenAt: day.salesOpenAt, salesCloseAt: day.salesCloseAt, open,
      seatsLeft: avail?.seatsLeft ?? null,
      offerings: offerings.map(o => ({
        id: o.id, kit: o.kit, revision: o.revision, groups: o.groups,
        priceMinor: me?.member ? o.memberPriceMinor : o.nonMemberPriceMinor,
        choices: (avail?.offerings.find(a => a.offeringId === o.id)?.choices ?? []).map(c => ({ optionIds: c.optionIds, available: c.sellable > 0 })),
      })),
    }
  }))
  const W = tables.waitlist
  const waiting = await db.select({ id: W.id, buildDayId: W.buildDayId, offeringId: W.offeringId, optionIds: W.optionIds, state: W.state, holdExpiresAt: W.holdExpiresAt, createdAt: W.createdAt })
    .from(W).where(and(eq(W.userId, user.id), inArray(W.state, ['waiting', 'offered']))).orderBy(W.createdAt)
  return { member: me?.member ?? false, days: onSale, orders: await ordersOfMember(db, user.id), waitlist: waiting }
})
