import { z } from 'zod'

const Query = z.object({ buildDayId: z.coerce.number().int().positive().optional() })

/** Bags of a build day (default: the next one) with packing totals; the build days to choose from. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  const q = parseQuery(event, Query)
  const { days } = await packingProgress(useDb())
  const day = days.find(d => d.id === q.buildDayId) ?? defaultDay(days)
  if (q.buildDayId && day?.id !== q.buildDayId) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such build day' })
  return { days, buildDayId: day?.id ?? null, bags: day ? await bagsOfDay(useDb(), day.id) : [] }
})
