import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Step 2: the rows as they will land (errors, warnings, value readings, catalogue matches) and the options the newest revision has. Changes nothing. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const input = await parseBody(event, importBodySchema)
  const db = useDb()
  await requireKit(db, id)
  const [preview, parentOptions] = await Promise.all([previewImport(db, input), parentOptionsOfImport(db, id)])
  // The newest revision's options, which the commit can carry over (`carryOptions`): the designer's file has only lines.
  return { ...preview, parentOptions }
})
