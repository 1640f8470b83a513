import { z } from 'zod'

const query = z.object({ q: z.string().trim().max(80).default('') })

/** Catalogue parts for the receive form and filters, matched by name, value or package. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { q } = parseQuery(event, query)
  const { parts } = tables
  const words = q.split(/\s+/).filter(Boolean).slice(0, 5)
  return useDb().select({ id: parts.id, kind: parts.kind, name: parts.name, valueText: parts.valueText, package: parts.package })
    .from(parts)
    .where(and(...words.map(w => or(like(parts.name, `%${w}%`), like(parts.valueText, `%${w}%`), like(parts.package, `%${w}%`)))))
    .orderBy(asc(parts.kind), asc(parts.value), asc(parts.name))
    .limit(q ? 50 : 500)
})
