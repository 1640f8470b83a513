import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const body = z.object({
  name: z.string().trim().min(1, 'Give the group a name').max(80, 'At most 80 characters'),
  rule: z.enum(['one', 'zero-or-one']),
})

/** Adds an option group (exactly one, or zero or one, of its options is chosen). */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const input = await parseBody(event, body)
  const group = await addRevisionOptionGroup(useDb(), id, input)
  setResponseStatus(event, 201)
  return group
})
