/** The builder's own orders with their state (paid, packing, sealed, collected) and the safety notes. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const orders = await listBuilderOrders(useDb(), user.id)
  return { orders, safety: safetyNotesFor(orders.some(o => o.kit.transmits)) }
})
