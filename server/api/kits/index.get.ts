/** Every kit with its revisions, for the kits list. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  return listKits(useDb())
})
