import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** A revision with its kit, stages, options, lines (parts and value readings) and problems. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  return revisionDetail(useDb(), id)
})
