import { z } from 'zod'

const params = z.object({ token: z.string().min(16).max(100) })

/** Turns the offered place down so the next member waiting gets it. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const { token } = parseParams(event, params)
  return declineOffer(user.id, token)
})
