import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Deletes a build day that has no orders yet (its offerings and waiting list go with it). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const db = useDb()
  return db.transaction(async (tx) => {
    const [day] = await tx.select().from(tables.buildDays).where(eq(tables.buildDays.id, id)).for('update')
    if (!day) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such build day' })
    if (await tx.$count(tables.orders, eq(tables.orders.buildDayId, id))) {
      throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'This build day has orders: cancel and refund them first, or keep the day' })
    }
    await tx.delete(tables.buildDays).where(eq(tables.buildDays.id, id))
    await audit(tx, user.id, 'build-day.delete', 'build_day', id, { name: day.name })
    return { deleted: true }
  })
})
