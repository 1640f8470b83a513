// What a build day offers, in the shapes the build day page and the shop show, with how many
// more kits of each option choice the stock and the seats still allow.
import type { OptionGroup } from '../../shared/utils/bom'

/** Option groups (with their options) of each revision, in the shared shape with string ids. */
export async function optionGroupsOf(db: Db, revisionIds: number[]) {
  const out = new Map<number, OptionGroup[]>()
  if (!revisionIds.length) return out
  const [groups, opts] = await Promise.all([
    db.select().from(tables.optionGroups).where(inArray(tables.optionGroups.revisionId, revisionIds)).orderBy(tables.optionGroups.sortOrder, tables.optionGroups.id),
    db.select().from(tables.options).where(inArray(tables.options.revisionId, revisionIds)).orderBy(tables.options.sortOrder, tables.options.id),
  ])
  for (const id of revisionIds) out.set(id, [])
  for (const g of groups) {
    out.get(g.revisionId)!.push({ id: String(g.id), name: g.name, rule: g.rule, options: opts.filter(o => o.groupId === g.id).map(o => ({ id: String(o.id), name: o.name })) })
  }
  return out
}

/** The offerings of some build days with their kit, revision and the option groups narrowed to the allowed options. */
export async function offeringViews(db: Db, buildDayIds: number[]) {
  if (!buildDayIds.length) return []
  const rows = await db.select({ offering: tables.offerings, rev: tables.revisions, kit: tables.kits }).from(tables.offerings)
    .innerJoin(tables.revisions, eq(tables.revisions.id, tables.offerings.revisionId))
    .innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId))
    .where(inArray(tables.offerings.buildDayId, buildDayIds)).orderBy(tables.kits.name)
  const groups = await optionGroupsOf(db, [...new Set(rows.map(r => r.rev.id))])
  return rows.map(({ offering, rev, kit }) => {
    const all = groups.get(rev.id) ?? []
    const allowed = offering.allowedOptionIds.map(String)
    return {
      ...offering,
      kit: { id: kit.id, name: kit.name, slug: kit.slug, description: kit.description, transmits: kit.transmits },
      revision: { id: rev.id, label: rev.label, state: rev.state },
      groups: all.map(g => ({ ...g, options: g.options.filter(o => allowed.includes(o.id)) })),
      allGroups: all,
    }
  })
}

export type OfferingView = Awaited<ReturnType<typeof offeringViews>>[number]

/**
 * For each offering and each option choice: how many kits the available stock makes (stand-ins
 * allowed) and how many can still be sold given the seats left. Each figure assumes all remaining
 * stock goes to that choice; choices compete for shared parts.
 */
export async function availabilityOf(db: Db, day: typeof tables.buildDays.$inferSelect, offerings?: OfferingView[]) {
  const views = offerings ?? await offeringViews(db, [day.id])
  const seatsLeft = Math.max(0, day.seats - await seatsTaken(db, day.id))
    return {
    seats: day.seats,
    seatsLeft,
    offerings: await Promise.all(views.map(async (o) => {
      const choices = await Promise.all(optionChoices(o.groups, o.allowedOptionIds).map(async (optionIds) => {
        const names = optionIds.map(id => o.groups.flatMap(g => g.options).find(x => x.id === String(id))?.name ?? String(id))
        try {
          const kits = await kitsAvailable(db, await kitDemand(db, o.revisionId, optionIds))
          return { optionIds, names, kits, sellable: Math.min(kits, seatsLeft), problem: null as string | null }
        }
        catch (err) {
          return { optionIds, names, kits: 0, sellable: 0, problem: (err as Error).message }
        }
      }))
      return { offeringId: o.id, kit: o.kit.name, revision: o.revision.label, choices }
    })),
  }
}
