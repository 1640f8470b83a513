import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive(), lineId: z.coerce.number().int().positive() })

/** Changes a draft's line (409 once released). */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id, lineId } = parseParams(event, params)
  const patch = await parseBody(event, lineBodySchema)
  return updateBomLine(useDb(), id, lineId, patch)
})
