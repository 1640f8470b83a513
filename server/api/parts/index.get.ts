export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  const query = parseQuery(event, partSearchQuery)
  return searchParts(useDb(), query)
})
