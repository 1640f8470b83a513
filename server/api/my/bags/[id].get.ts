import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** One of the builder's own bags, by stage, with the stand-ins packed and their warnings. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const { id } = parseParams(event, params)
  return loadBagForBuilder(useDb(), id, user.id)
})
