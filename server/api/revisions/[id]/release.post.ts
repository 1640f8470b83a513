import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Draft → released (frozen from now on). */
export default defineEventHandler(async (event) => {
  const me = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  return releaseRevision(useDb(), id, me.id)
})
