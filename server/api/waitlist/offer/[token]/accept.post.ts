import { z } from 'zod'

const params = z.object({ token: z.string().min(16).max(100) })

/** Takes the offered place: answers the card payment page to go to. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const { token } = parseParams(event, params)
  return acceptOffer(user, token)
})
