import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Leaves the waiting list (the member's own place only). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const { id } = parseParams(event, params)
  return leaveWaitlist(user.id, id)
})
