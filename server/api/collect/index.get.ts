/** The door's tally: sealed bags waiting and bags collected, per build day, and the latest collections. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  return collectionTally(useDb())
})
