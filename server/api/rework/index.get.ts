/** Sealed bags that a newer released revision of their kit leaves behind, each with its rework list. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  return listReworkCandidates(useDb())
})
