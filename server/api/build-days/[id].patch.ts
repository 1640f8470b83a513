import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const body = await parseBody(event, buildDayBody.partial())
  const db = useDb()
  return sellingTx(db, async (tx) => {
    const day = await lockBuildDay(tx, id)
    checkSalesWindow(body.salesOpenAt ?? day.salesOpenAt, body.salesCloseAt ?? day.salesCloseAt)
    if (body.seats !== undefined) {
      const taken = await seatsTaken(tx, id)
      if (body.seats < taken) {
        const message = `${taken} seats are already taken or being paid for: keep at least ${taken}`
        throw createError({ statusCode: 409, statusMessage: 'Conflict', message, data: { fields: { seats: message } } })
      }
    }
    if (body.currency && body.currency !== day.currency && await tx.$count(tables.orders, eq(tables.orders.buildDayId, id))) {
      const message = 'Orders exist in the current currency: it cannot change now'
      throw createError({ statusCode: 409, statusMessage: 'Conflict', message, data: { fields: { currency: message } } })
    }
    await tx.update(tables.buildDays).set(body).where(eq(tables.buildDays.id, id))
    await audit(tx, user.id, 'build-day.update', 'build_day', id, body)
    const [after] = await tx.select().from(tables.buildDays).where(eq(tables.buildDays.id, id))
    return after
  })
})
