import { z } from 'zod'

const query = z.object({ buildDayId: z.coerce.number().int().positive().optional() })

/** The day's counters at the spares desk; the per-packer figures only for organisers. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser', 'packer')
  const { buildDayId } = parseQuery(event, query)
  const db = useDb()
  const { days, current } = await sparesDays(db)
  const dayId = buildDayId ?? current?.id
  if (!dayId || !days.some(d => d.id === dayId)) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'No such build day' })
  return { days, ...(await sparesCounters(db, dayId, user.roles.includes('organiser'))) }
})
