/** The stock label layouts (A4, US Letter, label-printer rolls) with their sizes. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  return SHEET_LAYOUTS.map(l => ({ ...l, ...layoutGeometry(l) }))
})
