/** Reconciles a revision's options mix against available stock (reservations counted) at a target. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const q = parseQuery(event, reconcileQuery)
  const data = await loadReconcileData(useDb(), q.revisionId, q.mix)
  const { result, ...report } = reconcileReport(data, q.target)
  return { ...report, allocation: result.allocation }
})
