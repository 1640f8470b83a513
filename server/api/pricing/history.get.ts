import { z } from 'zod'

const query = z.object({ revisionId: z.coerce.number().int().positive() })

/** Published prices of a revision, newest first, with who published them. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { revisionId } = parseQuery(event, query)
  const H = tables.priceHistory
  const rows = await useDb().select({ h: H, by: tables.users.name }).from(H).leftJoin(tables.users, eq(tables.users.id, H.publishedBy))
    .where(eq(H.revisionId, revisionId)).orderBy(desc(H.createdAt), desc(H.id)).limit(100)
  return rows.map(r => ({ ...r.h, publishedByName: r.by }))
})
