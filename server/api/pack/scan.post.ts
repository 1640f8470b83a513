import { z } from 'zod'

const Body = z.object({
  text: z.string().max(400, 'That scan is too long to be a Kitwright label'),
  buildDayId: z.number().int().positive(),
  bagId: z.number().int().positive().optional(),
  itemId: z.number().int().positive().optional(),
  qty: z.number().int('Count whole parts').min(1, 'Put in at least 1').max(10_000).optional(),
  confirmStandIn: z.boolean().optional(),
})

/** One scan at the packing station (a bag or a bin label); see scan() in server/utils/packing.ts. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser', 'packer')
  const body = await parseBody(event, Body)
  return scan(useDb(), user, body, useRuntimeConfig(event).labelSecret)
})
