import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Deletes a draft (409 for a released or retired revision). */
export default defineEventHandler(async (event) => {
  const me = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  await deleteDraft(useDb(), id, me.id)
  return { ok: true }
})
