/** Kit revisions that can be offered or priced, with their option groups. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const db = useDb()
  const revs = await db.select({ id: tables.revisions.id, label: tables.revisions.label, state: tables.revisions.state, kitId: tables.kits.id, kitName: tables.kits.name })
    .from(tables.revisions).innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId))
    .where(ne(tables.revisions.state, 'retired')).orderBy(asc(tables.kits.name), desc(tables.revisions.id))
  const groups = await optionGroupsOf(db, revs.map(r => r.id))
  return revs.map(r => ({ ...r, groups: groups.get(r.id) ?? [] }))
})
