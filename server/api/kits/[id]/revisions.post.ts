import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const body = z.object({
  fromId: z.number().int().positive().nullish(),
  label: z.string().trim().max(24, 'At most 24 characters').regex(/^[\w .-]*$/, 'Letters, digits, spaces, dots and dashes only').nullish(),
  notes: z.string().trim().max(2000, 'At most 2000 characters').nullish(),
})

/** A new draft revision, copied from `fromId` or from the kit's newest revision. */
export default defineEventHandler(async (event) => {
  const me = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const input = await parseBody(event, body)
  const rev = await newRevision(useDb(), id, input, me.id)
  setResponseStatus(event, 201)
  return rev
})
