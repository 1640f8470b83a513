import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** The member's own order as the return pages show it; a pending one carries its payment page address. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const { id } = parseParams(event, params)
  const db = useDb()
  const [order] = await ordersOfMember(db, user.id, id)
  if (!order) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such order of yours' })
  let payUrl: string | null = null
  if (order.state === 'pending' && order.stripeSessionId) {
    const session = await useStripe().checkout.sessions.retrieve(order.stripeSessionId).catch(() => null)
    if (session?.status === 'open') payUrl = session.url
  }
  const { stripeSessionId: _s, ...rest } = order
  return { ...rest, payUrl }
})
