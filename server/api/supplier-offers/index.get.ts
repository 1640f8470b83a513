import { z } from 'zod'

const query = z.object({ partId: z.coerce.number().int().positive().optional(), q: z.string().trim().max(80).optional() })

/** Supplier offers with their part, by part name then supplier. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const f = parseQuery(event, query)
  const { supplierOffers: o, parts } = tables
  return useDb().select({
    id: o.id, partId: o.partId, partName: parts.name, kind: parts.kind, supplier: o.supplier, supplierRef: o.supplierRef,
    currency: o.currency, minQty: o.minQty, packSize: o.packSize, breaks: o.breaks,
  }).from(o).innerJoin(parts, eq(parts.id, o.partId))
    .where(and(
      f.partId ? eq(o.partId, f.partId) : undefined,
      f.q ? or(like(parts.name, `%${f.q}%`), like(o.supplier, `%${f.q}%`), like(o.supplierRef, `%${f.q}%`)) : undefined,
    ))
    .orderBy(asc(parts.name), asc(o.supplier), asc(o.id))
    .limit(2000)
})
