import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const body = z.object({
  label: z.string().trim().min(1, 'Give a label').max(24, 'At most 24 characters').regex(/^[\w .-]*$/, 'Letters, digits, spaces, dots and dashes only').optional(),
  notes: z.string().trim().max(2000, 'At most 2000 characters').nullish(),
})

/** Changes a draft's label or notes (409 once released). */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const patch = await parseBody(event, body)
  await updateRevision(useDb(), id, patch)
  return { ok: true }
})
