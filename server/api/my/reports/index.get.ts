/** The builder's own missing-part reports with their states, photos and hand-outs. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  return listBuilderReports(useDb(), user.id)
})
