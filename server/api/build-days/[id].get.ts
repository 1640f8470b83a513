import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** One build day with what it offers. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const db = useDb()
  const [day] = await db.select().from(tables.buildDays).where(eq(tables.buildDays.id, id))
  if (!day) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such build day' })
  const offerings = await offeringViews(db, [id])
  const orders = await db.select({ offeringId: tables.orders.offeringId, n: sql<number>`count(*)` }).from(tables.orders).where(eq(tables.orders.buildDayId, id)).groupBy(tables.orders.offeringId)
  return {
    ...day,
    seatsTaken: await seatsTaken(db, id),
    offerings: offerings.map(o => ({ ...o, orders: Number(orders.find(x => x.offeringId === o.id)?.n ?? 0) })),
  }
})
