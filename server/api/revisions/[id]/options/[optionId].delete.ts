import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive(), optionId: z.coerce.number().int().positive() })

/** Deletes an option and its lines. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id, optionId } = parseParams(event, params)
  await deleteRevisionOption(useDb(), id, optionId)
  return { ok: true }
})
