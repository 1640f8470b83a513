/** One bag: its pouches and lines with what is packed, its pick list and its history. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  const { code } = parseParams(event, BagCodeParams)
  const db = useDb()
  const bagId = await bagIdByCode(db, code)
  const [view, history, picks] = await Promise.all([bagView(db, bagId), bagHistory(db, bagId), planPicks(db, [bagId])])
  return { ...view, history, picks: picks.rows, token: signCode('bag', code, useRuntimeConfig(event).labelSecret) }
})
