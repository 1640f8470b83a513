import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const body = z.object({
  toBin: z.string({ error: 'Scan or type the bin to move to' }).trim().min(1, 'Scan or type the bin to move to').max(200),
  qty: z.number({ error: 'Give the quantity' }).int('Quantities are whole numbers').positive('Move 1 or more'),
  reason: z.string().trim().max(255, 'Keep the reason under 255 characters').nullish(),
})

/** Moves part of a lot to another bin in one transaction (409 when the lot holds too few). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const m = await parseBody(event, body)
  const db = useDb()
  const bin = await findBinByScan(db, m.toBin, useRuntimeConfig().labelSecret)
  return runStockTx(db, tx => moveLot(tx, { lotId: id, toBinId: bin.id, qty: m.qty, userId: user.id, reason: m.reason }))
})
