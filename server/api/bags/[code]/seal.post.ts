/** Seals a fully packed bag (the station seals by itself after the last line; this is the retry). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser', 'packer')
  const { code } = parseParams(event, BagCodeParams)
  const db = useDb()
  const bagId = await bagIdByCode(db, code)
  await sealBag(db, bagId, user)
  return bagView(db, bagId)
})
