import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Step 2: the rows as they will land (errors, warnings, value readings, catalogue matches). Changes nothing. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const input = await parseBody(event, importBodySchema)
  const db = useDb()
  await requireKit(db, id)
  return previewImport(db, input)
})
