import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive(), groupId: z.coerce.number().int().positive() })
const body = z.object({
  name: z.string().trim().min(1, 'Give the group a name').max(80, 'At most 80 characters').optional(),
  rule: z.enum(['one', 'zero-or-one']).optional(),
})

export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id, groupId } = parseParams(event, params)
  const patch = await parseBody(event, body)
  await updateRevisionOptionGroup(useDb(), id, groupId, patch)
  return { ok: true }
})
