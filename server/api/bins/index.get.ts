/** Bins in walk order, with how many lots and parts each holds. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const db = useDb()
  const { bins, lots } = tables
  return db.select({
    id: bins.id, code: bins.code, place: bins.place, walkOrder: bins.walkOrder,
    lots: sql<number>`cast(count(case when ${lots.onHand} > 0 then 1 end) as signed)`,
    onHand: sql<number>`cast(coalesce(sum(${lots.onHand}), 0) as signed)`,
  }).from(bins).leftJoin(lots, eq(lots.binId, bins.id))
    .groupBy(bins.id, bins.code, bins.place, bins.walkOrder)
    .orderBy(asc(bins.walkOrder), asc(bins.code))
})
