import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const query = z.object({ against: z.coerce.number().int().positive().optional() })

/** What changed from `against` (default: this revision's parent) to this revision. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const { against } = parseQuery(event, query)
  const db = useDb()
  const from = against ?? (await requireRevision(db, id)).parentId
  if (!from) throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'This revision has no parent: say which revision to compare it with (?against=)' })
  return revisionDiff(db, from, id)
})
