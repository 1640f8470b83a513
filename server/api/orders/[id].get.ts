import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** One order: organisers see any; a builder sees only their own (404 for anyone else's). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser', 'builder')
  const { id } = parseParams(event, params)
  const db = useDb()
  if (!user.roles.includes('organiser')) {
    const [mine] = await ordersOfMember(db, user.id, id)
    if (!mine) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such order of yours' })
    const { stripeSessionId: _s, ...rest } = mine
    return rest
  }
  const [row] = await listOrders(db, { orderId: id })
  if (!row) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such order' })
  const reservations = await db.select({ r: tables.reservations, part: tables.parts.name }).from(tables.reservations)
    .innerJoin(tables.parts, eq(tables.parts.id, tables.reservations.partId)).where(eq(tables.reservations.orderId, id))
  return { ...row, reservations: reservations.map(x => ({ ...x.r, partName: x.part })) }
})
