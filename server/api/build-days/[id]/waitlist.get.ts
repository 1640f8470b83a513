import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** The waiting list of a build day, in turn order. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const W = tables.waitlist
  const rows = await useDb().select({ entry: W, name: tables.users.name, email: tables.users.email, kit: tables.kits.name })
    .from(W).innerJoin(tables.users, eq(tables.users.id, W.userId))
    .innerJoin(tables.offerings, eq(tables.offerings.id, W.offeringId))
    .innerJoin(tables.revisions, eq(tables.revisions.id, tables.offerings.revisionId))
    .innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId))
    .where(eq(W.buildDayId, id)).orderBy(W.createdAt, W.id)
  return rows.map(r => ({ id: r.entry.id, state: r.entry.state, name: r.name, email: r.email, kit: r.kit, optionIds: r.entry.optionIds, holdExpiresAt: r.entry.holdExpiresAt, orderId: r.entry.orderId, createdAt: r.entry.createdAt }))
})
