export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const body = await parseBody(event, buildDayBody)
  checkSalesWindow(body.salesOpenAt, body.salesCloseAt)
  const db = useDb()
  const [row] = await db.insert(tables.buildDays).values(body).$returningId()
  await audit(db, user.id, 'build-day.create', 'build_day', row!.id, { name: body.name, date: body.date })
  const [day] = await db.select().from(tables.buildDays).where(eq(tables.buildDays.id, row!.id))
  return day
})
