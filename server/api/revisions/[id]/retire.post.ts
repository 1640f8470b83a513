import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Released → retired. */
export default defineEventHandler(async (event) => {
  const me = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  return retireRevision(useDb(), id, me.id)
})
