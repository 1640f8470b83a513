import { z } from 'zod'

const Body = z.object({ buildDayId: z.number().int().positive() })

/** Creates the missing bags: one for every paid order of the build day that has none. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { buildDayId } = await parseBody(event, Body)
  const db = useDb()
  const [day] = await db.select({ id: tables.buildDays.id }).from(tables.buildDays).where(eq(tables.buildDays.id, buildDayId))
  if (!day) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such build day' })
  const result = await createMissingBags(db, buildDayId)
  if (result.created.length) await audit(db, user.id, 'bags.create', 'build_day', buildDayId, { created: result.created.length })
  return result
})
