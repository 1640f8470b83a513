import { z } from 'zod'

const body = z.object({
  buildDayId: z.number().int().positive('Choose a build day'),
  offeringId: z.number().int().positive('Choose a kit'),
  optionIds: z.array(z.number().int().positive()).max(50).default([]),
})

/** Holds a kit and a seat for the signed-in member and answers the card payment page to go to. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const input = await parseBody(event, body)
  return startCheckout(user, input)
})
