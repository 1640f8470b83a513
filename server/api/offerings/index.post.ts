/** Offers a released kit revision at a build day, with the allowed options and its prices. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const body = await parseBody(event, offeringBody)
  const db = useDb()
  const [day] = await db.select({ id: tables.buildDays.id }).from(tables.buildDays).where(eq(tables.buildDays.id, body.buildDayId))
  if (!day) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such build day' })
  await checkOffering(db, body.revisionId, body.allowedOptionIds)
  const [dup] = await db.select({ id: tables.offerings.id }).from(tables.offerings)
    .where(and(eq(tables.offerings.buildDayId, body.buildDayId), eq(tables.offerings.revisionId, body.revisionId)))
  if (dup) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'This revision is already offered at this build day', data: { fields: { revisionId: 'Already offered here' } } })
  const [row] = await db.insert(tables.offerings).values(body).$returningId()
  await audit(db, user.id, 'offering.create', 'offering', row!.id, body)
  return { id: row!.id }
})
