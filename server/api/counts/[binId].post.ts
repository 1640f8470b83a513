import { z } from 'zod'

const params = z.object({ binId: z.coerce.number().int().positive() })
const whole = (what: string) => z.number({ error: `Give the ${what}` }).int(`The ${what} is a whole number`).min(0, `The ${what} cannot be negative`).max(10_000_000)
const body = z.object({
  reason: z.string().trim().max(255, 'Keep the reason under 255 characters').default(''),
  counts: z.array(z.object({ lotId: z.number().int().positive(), expected: whole('quantity on the sheet'), counted: whole('counted quantity') })).min(1, 'Count at least one lot').max(2000),
})

/** Applies a count sheet: an adjustment ledger row for every lot whose count differs (409 if a lot changed meanwhile). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { binId } = parseParams(event, params)
  const c = await parseBody(event, body)
  const adjustments = await runStockTx(useDb(), tx => countBin(tx, { binId, counts: c.counts, reason: c.reason, userId: user.id }))
  return { binId, adjustments }
})
