/** Kit revisions that can be offered or priced, with their option groups and where they are offered. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const db = useDb()
  const revs = await db.select({ id: tables.revisions.id, label: tables.revisions.label, state: tables.revisions.state, kitId: tables.kits.id, kitName: tables.kits.name })
    .from(tables.revisions).innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId))
    .where(ne(tables.revisions.state, 'retired')).orderBy(asc(tables.kits.name), desc(tables.revisions.id))
  const groups = await optionGroupsOf(db, revs.map(r => r.id))
  const offered = revs.length
    ? await db.select({ id: tables.offerings.id, revisionId: tables.offerings.revisionId, buildDayId: tables.buildDays.id, buildDay: tables.buildDays.name, date: tables.buildDays.date, memberPriceMinor: tables.offerings.memberPriceMinor, nonMemberPriceMinor: tables.offerings.nonMemberPriceMinor, currency: tables.buildDays.currency })
      .from(tables.offerings).innerJoin(tables.buildDays, eq(tables.buildDays.id, tables.offerings.buildDayId))
      .where(inArray(tables.offerings.revisionId, revs.map(r => r.id))).orderBy(tables.buildDays.date)
    : []
  return revs.map(r => ({ ...r, groups: groups.get(r.id) ?? [], offerings: offered.filter(o => o.revisionId === r.id) }))
})
