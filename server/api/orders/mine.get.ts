/** The signed-in member's own orders. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const rows = await ordersOfMember(useDb(), user.id)
  return rows.map(({ stripeSessionId: _s, ...r }) => r)
})
