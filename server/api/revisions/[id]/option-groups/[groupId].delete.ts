import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive(), groupId: z.coerce.number().int().positive() })

/** Deletes an option group with its options and their lines. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id, groupId } = parseParams(event, params)
  await deleteRevisionOptionGroup(useDb(), id, groupId)
  return { ok: true }
})
