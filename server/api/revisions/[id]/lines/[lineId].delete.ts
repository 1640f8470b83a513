import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive(), lineId: z.coerce.number().int().positive() })

/** Deletes a draft's line (409 once released). */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id, lineId } = parseParams(event, params)
  await deleteBomLine(useDb(), id, lineId)
  return { ok: true }
})
