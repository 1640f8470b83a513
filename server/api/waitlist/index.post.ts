import { z } from 'zod'

const body = z.object({
  buildDayId: z.number().int().positive('Choose a build day'),
  offeringId: z.number().int().positive('Choose a kit'),
  optionIds: z.array(z.number().int().positive()).max(50).default([]),
})

/** Joins the waiting list for a kit choice that is sold out (stock or seats). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const input = await parseBody(event, body)
  return joinWaitlist(user, input)
})
