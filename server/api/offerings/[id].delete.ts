import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Withdraws an offering that nobody has ordered yet. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const db = useDb()
  const [offering] = await db.select().from(tables.offerings).where(eq(tables.offerings.id, id))
  if (!offering) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such offering' })
  if (await db.$count(tables.orders, eq(tables.orders.offeringId, id))) {
    throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'Members have ordered this kit here: it cannot be withdrawn. Set its allowed options or cancel the orders instead.' })
  }
  await db.delete(tables.offerings).where(eq(tables.offerings.id, id))
  await audit(db, user.id, 'offering.delete', 'offering', id, { buildDayId: offering.buildDayId, revisionId: offering.revisionId })
  return { deleted: true }
})
