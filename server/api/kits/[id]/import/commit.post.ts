import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Step 3: creates a draft revision from every row, or from none (422 and nothing written). */
export default defineEventHandler(async (event) => {
  const me = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const input = await parseBody(event, importCommitSchema)
  const result = await commitImport(useDb(), id, input, me.id)
  setResponseStatus(event, 201)
  return result
})
