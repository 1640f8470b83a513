/** Build days with their seats and order counts, soonest first. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const db = useDb()
  const O = tables.orders
  const [days, counts, waiting] = await Promise.all([
    db.select().from(tables.buildDays).orderBy(tables.buildDays.date),
    db.select({ dayId: O.buildDayId, state: O.state, live: sql<number>`sum(${O.holdExpiresAt} > ${new Date()})`, n: sql<number>`count(*)` }).from(O).groupBy(O.buildDayId, O.state),
    db.select({ dayId: tables.waitlist.buildDayId, n: sql<number>`count(*)` }).from(tables.waitlist).where(eq(tables.waitlist.state, 'waiting')).groupBy(tables.waitlist.buildDayId),
  ])
  return days.map((d) => {
    const of = (state: string) => Number(counts.find(c => c.dayId === d.id && c.state === state)?.n ?? 0)
    const livePending = Number(counts.find(c => c.dayId === d.id && c.state === 'pending')?.live ?? 0)
    return { ...d, paid: of('paid'), pending: livePending, seatsTaken: of('paid') + livePending, waiting: Number(waiting.find(w => w.dayId === d.id)?.n ?? 0) }
  })
})
