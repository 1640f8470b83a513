import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive(), groupId: z.coerce.number().int().positive() })
const body = z.object({ name: z.string().trim().min(1, 'Give the option a name').max(80, 'At most 80 characters') })

/** Adds an option to a group. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id, groupId } = parseParams(event, params)
  const { name } = await parseBody(event, body)
  const option = await addRevisionOption(useDb(), id, groupId, name)
  setResponseStatus(event, 201)
  return option
})
