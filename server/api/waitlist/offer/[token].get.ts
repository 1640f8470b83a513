import { z } from 'zod'

const params = z.object({ token: z.string().min(16).max(100) })

/** The place held for a waiting member, behind the link they were e-mailed. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const { token } = parseParams(event, params)
  return showOffer(user.id, token)
})
