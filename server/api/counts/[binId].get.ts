import { z } from 'zod'

const params = z.object({ binId: z.coerce.number().int().positive() })

/** A bin's count sheet: every lot in it with stock, and what the ledger says it holds. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { binId } = parseParams(event, params)
  const db = useDb()
  const [bin] = await db.select().from(tables.bins).where(eq(tables.bins.id, binId))
  if (!bin) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `There is no bin ${binId}` })
  const { lots, parts } = tables
  const rows = await db.select({
    lotId: lots.id, partId: lots.partId, partName: parts.name, kind: parts.kind, onHand: lots.onHand,
    supplier: lots.supplier, supplierRef: lots.supplierRef, receivedOn: lots.receivedOn,
  }).from(lots).innerJoin(parts, eq(parts.id, lots.partId))
    .where(and(eq(lots.binId, binId), gt(lots.onHand, 0)))
    .orderBy(asc(parts.name), asc(lots.id))
  return { bin, lots: rows }
})
