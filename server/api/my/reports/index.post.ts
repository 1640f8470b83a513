/** Files a missing-part report on the builder's own bag (multipart: fields and up to three photos). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const { form, photos } = await readReportForm(event)
  const db = useDb()
  const id = await fileMissingPartReport(db, user, form, photos)
  setResponseStatus(event, 201)
  const [view] = await describeReports(db, await db.select().from(tables.reports).where(eq(tables.reports.id, id)))
  return view
})
