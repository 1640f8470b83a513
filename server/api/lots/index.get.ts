import { z } from 'zod'

const id = z.coerce.number().int().positive().optional()
const day = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'Use a date like 2027-02-13').optional().or(z.literal('').transform(() => undefined))
const query = z.object({
  partId: id, binId: id, lotId: id, from: day, to: day,
  q: z.string().trim().max(80).optional(),
  stock: z.enum(['in', 'all']).default('in'),
})

/** Lots with their part and bin, newest receipt first; by default only lots still holding stock. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const f = parseQuery(event, query)
  const { lots, parts, bins } = tables
  return useDb().select({
    id: lots.id, partId: lots.partId, partName: parts.name, kind: parts.kind, binId: lots.binId, binCode: bins.code,
    qtyReceived: lots.qtyReceived, onHand: lots.onHand, unitCostMinor: lots.unitCostMinor, currency: lots.currency,
    supplier: lots.supplier, supplierRef: lots.supplierRef, receivedOn: lots.receivedOn, note: lots.note,
  }).from(lots).innerJoin(parts, eq(parts.id, lots.partId)).innerJoin(bins, eq(bins.id, lots.binId))
    .where(and(
      f.partId ? eq(lots.partId, f.partId) : undefined,
      f.binId ? eq(lots.binId, f.binId) : undefined,
      f.lotId ? eq(lots.id, f.lotId) : undefined,
      f.from ? gte(lots.receivedOn, f.from) : undefined,
      f.to ? lte(lots.receivedOn, f.to) : undefined,
      f.q ? or(like(parts.name, `%${f.q}%`), like(lots.supplier, `%${f.q}%`), like(lots.supplierRef, `%${f.q}%`)) : undefined,
      f.stock === 'in' ? gt(lots.onHand, 0) : undefined,
    ))
    .orderBy(desc(lots.receivedOn), desc(lots.id))
    .limit(2000)
})
