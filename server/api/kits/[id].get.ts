import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  return kitDetail(useDb(), id)
})
