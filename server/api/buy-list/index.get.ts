/** The buy list for a reconciliation: shortfall plus spares, the cheapest offer per part, by supplier. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const q = parseQuery(event, reconcileQuery)
  const db = useDb()
  const data = await loadReconcileData(db, q.revisionId, q.mix)
  const report = reconcileReport(data, q.target)
  const list = await buyListReport(db, data, report, { spares: q.spares ?? DEFAULT_SPARES, currency: q.currency })
  return { revision: report.revision, target: report.target, spares: q.spares ?? DEFAULT_SPARES, ...list }
})
