import { z } from 'zod'

/** Filters of the orders page and its exports. */
export const orderQuery = z.object({
  buildDayId: z.coerce.number().int().positive().optional(),
  state: z.enum(['pending', 'paid', 'cancelled', 'expired', 'refunded']).optional(),
  member: z.enum(['yes', 'no']).optional().transform(v => (v === undefined ? undefined : v === 'yes')),
  kitId: z.coerce.number().int().positive().optional(),
  q: z.string().trim().max(100).optional().transform(v => v || undefined),
})
