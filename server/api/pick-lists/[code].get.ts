/** One bag's pick list: its lines still to pack in bin walk order, with the lot or stand-in to use. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  const { code } = parseParams(event, BagCodeParams)
  const db = useDb()
  const bagId = await bagIdByCode(db, code)
  const [[bag], plan] = await Promise.all([loadBagHeaders(db, { ids: [bagId] }), planPicks(db, [bagId])])
  return { bag, rows: plan.rows }
})
