/** Bags not started / in progress / sealed per build day, for the progress board (polled). */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  return packingProgress(useDb())
})
