import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const query = z.object({ q: z.string().trim().max(100).default('') })

/** Catalogue parts for a line editor of this revision. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const { q } = parseQuery(event, query)
  const db = useDb()
  await requireRevision(db, id)
  return searchPartsForLine(db, q)
})
