import { z } from 'zod'

// Movements recorded by hand; receipts, moves, counts and picks have their own routes.
const SIGN = { scrap: -1, spares: -1, return: 1 } as const
const body = z.object({
  lotId: z.number({ error: 'Choose the lot' }).int().positive('Choose the lot'),
  kind: z.enum(['scrap', 'spares', 'return'], { error: 'Choose scrap, spares hand-out or return' }),
  qty: z.number({ error: 'Give the quantity' }).int('Quantities are whole numbers').positive('Give 1 or more (the kind says which way it goes)'),
  reason: z.string({ error: 'Say why' }).trim().min(3, 'Say why, in a few words').max(255, 'Keep the reason under 255 characters'),
  orderId: z.number().int().positive().nullish(),
  bagId: z.number().int().positive().nullish(),
})

/** Scraps parts, hands out spares, or takes a return, as one ledger row on a lot. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const m = await parseBody(event, body)
  const db = useDb()
  await runStockTx(db, tx => moveStock(tx, { lotId: m.lotId, qty: SIGN[m.kind] * m.qty, kind: m.kind, userId: user.id, reason: m.reason, orderId: m.orderId, bagId: m.bagId }))
  const [lot] = await db.select({ id: tables.lots.id, onHand: tables.lots.onHand }).from(tables.lots).where(eq(tables.lots.id, m.lotId))
  setResponseStatus(event, 201)
  return { lotId: m.lotId, kind: m.kind, qty: SIGN[m.kind] * m.qty, onHand: lot?.onHand }
})
