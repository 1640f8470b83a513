import { z } from 'zod'

const Query = z.object({
  buildDayId: z.coerce.number().int().positive(),
  codes: z.string().max(4000).optional(),
  revisionId: z.coerce.number().int().positive().optional(),
})

/** The batch pick list for the unsealed bags of a build day (or the bags named in `codes`). */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  const q = parseQuery(event, Query)
  const db = useDb()
  const bags = await bagsOfDay(db, q.buildDayId)
  const wanted = q.codes ? new Set(q.codes.toUpperCase().split(/[\s,]+/).filter(Boolean)) : null
  const chosen = bags.filter(b => (wanted ? wanted.has(b.code) : b.state === 'open' || b.state === 'packing') && (!q.revisionId || b.revisionId === q.revisionId))
  return batchPicks(db, chosen.map(b => b.id))
})
