export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  return listSwapGroups(useDb())
})
