import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** How many more kits of each offering and option choice can be sold, from available stock and seats. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const db = useDb()
  const [day] = await db.select().from(tables.buildDays).where(eq(tables.buildDays.id, id))
  if (!day) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such build day' })
  return { ...await availabilityOf(db, day), at: new Date().toISOString() }
})
