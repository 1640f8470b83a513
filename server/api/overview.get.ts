/** Counts for the organiser's overview page. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const db = useDb()
  const [kits, parts, bins, paidOrders, bags, openReports, buildDays] = await Promise.all([
    db.$count(tables.kits),
    db.$count(tables.parts),
    db.$count(tables.bins),
    db.$count(tables.orders, eq(tables.orders.state, 'paid')),
    db.$count(tables.bags),
    db.$count(tables.reports, inArray(tables.reports.state, ['open', 'handling'])),
    db.select().from(tables.buildDays).orderBy(tables.buildDays.date),
  ])
  return { counts: { kits, parts, bins, buildDays: buildDays.length, paidOrders, bags, openReports }, buildDays }
})
