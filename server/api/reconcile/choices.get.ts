/** Revisions to reconcile (newest kit revisions first) with their option groups. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const db = useDb()
  const { revisions, kits, optionGroups, options } = tables
  const [revs, groups, opts] = await Promise.all([
    db.select({ id: revisions.id, label: revisions.label, state: revisions.state, kitId: kits.id, kitName: kits.name })
      .from(revisions).innerJoin(kits, eq(kits.id, revisions.kitId)).orderBy(asc(kits.name), desc(revisions.id)),
    db.select().from(optionGroups).orderBy(asc(optionGroups.sortOrder), asc(optionGroups.id)),
    db.select().from(options).orderBy(asc(options.sortOrder), asc(options.id)),
  ])
  return revs.map(r => ({
    ...r,
    groups: groups.filter(g => g.revisionId === r.id).map(g => ({
      id: g.id, name: g.name, rule: g.rule,
      options: opts.filter(o => o.groupId === g.id).map(o => ({ id: o.id, name: o.name })),
    })),
  }))
})
