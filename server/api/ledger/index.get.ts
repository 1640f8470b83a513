import { z } from 'zod'

const id = z.coerce.number().int().positive().optional()
const day = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'Use a date like 2027-02-13').optional().or(z.literal('').transform(() => undefined))
const query = z.object({
  partId: id, binId: id, lotId: id, orderId: id, bagId: id, from: day, to: day,
  kind: z.enum(tables.LEDGER_KINDS, { error: 'Unknown kind of movement' }).optional().or(z.literal('').transform(() => undefined)),
  limit: z.coerce.number().int().min(1).max(5000).default(500),
})

/** Ledger rows, newest first, with part, bin and who; filters by part, bin, lot, kind, order, bag and date. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const f = parseQuery(event, query)
  const { ledger, parts, bins, users } = tables
  return useDb().select({
    id: ledger.id, at: ledger.createdAt, kind: ledger.kind, qty: ledger.qty, lotId: ledger.lotId,
    partId: ledger.partId, partName: parts.name, binId: ledger.binId, binCode: bins.code,
    userName: users.name, reason: ledger.reason, orderId: ledger.orderId, bagId: ledger.bagId, reportId: ledger.reportId,
  }).from(ledger)
    .innerJoin(parts, eq(parts.id, ledger.partId)).innerJoin(bins, eq(bins.id, ledger.binId)).leftJoin(users, eq(users.id, ledger.userId))
    .where(and(
      f.partId ? eq(ledger.partId, f.partId) : undefined,
      f.binId ? eq(ledger.binId, f.binId) : undefined,
      f.lotId ? eq(ledger.lotId, f.lotId) : undefined,
      f.orderId ? eq(ledger.orderId, f.orderId) : undefined,
      f.bagId ? eq(ledger.bagId, f.bagId) : undefined,
      f.kind ? eq(ledger.kind, f.kind) : undefined,
      f.from ? gte(ledger.createdAt, new Date(`${f.from}T00:00:00Z`)) : undefined,
      f.to ? lt(ledger.createdAt, new Date(Date.parse(`${f.to}T00:00:00Z`) + 86_400_000)) : undefined,
    ))
    .orderBy(desc(ledger.id))
    .limit(f.limit)
})
