import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
// Fields are checked after merging over the stored part, by partBody.
const changes = z.record(z.string(), z.unknown())

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const body = await parseBody(event, changes)
  const db = useDb()
  return db.transaction(async (tx) => {
    const [stored] = await tx.select().from(tables.parts).where(eq(tables.parts.id, id)).for('update')
    if (!stored) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No part ${id} in the catalogue` })
    const values = mergePartChanges(stored, body)
    await tx.update(tables.parts).set(values).where(eq(tables.parts.id, id))
    await audit(tx, user.id, 'part.update', 'part', id, { fields: Object.keys(body) })
    return { id, ...values }
  })
})
