import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const body = z.object({ reason: z.string().trim().min(3, 'Say why, in a few words (the member reads it)').max(200, 'At most 200 characters') })

/** Cancels an order: a paid one is refunded in full, its stock and seat released and the member e-mailed. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const { reason } = await parseBody(event, body)
  return cancelOrder(user.id, id, reason)
})
