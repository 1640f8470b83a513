import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** The member gives up a checkout in progress: the kit and seat go back (or to the waiting list). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const { id } = parseParams(event, params)
  const db = useDb()
  const [order] = await db.select().from(tables.orders).where(and(eq(tables.orders.id, id), eq(tables.orders.userId, user.id)))
  if (!order) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such order of yours' })
  if (order.state !== 'pending') return { state: order.state, released: false }
  const released = await releasePending(id, 'cancelled', 'Cancelled by the member before paying')
  return { state: released ? 'cancelled' : order.state, released }
})
