import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Adds a line to a draft (409 once released). */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const input = await parseBody(event, lineBodySchema)
  const line = await addBomLine(useDb(), id, input)
  setResponseStatus(event, 201)
  return line
})
