/** Every order matching the filters, with totals (organiser). */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const filters = parseQuery(event, orderQuery)
  const rows = await listOrders(useDb(), filters)
  return { rows, totals: orderTotals(rows) }
})
