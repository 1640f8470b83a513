/** The packer lets go of a bag so that someone else may pack it. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser', 'packer')
  const { code } = parseParams(event, BagCodeParams)
  const db = useDb()
  return releaseBag(db, await bagIdByCode(db, code), user)
})
