import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const db = useDb()
  await db.transaction(async (tx) => {
    const [part] = await tx.select().from(tables.parts).where(eq(tables.parts.id, id)).for('update')
    if (!part) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No part ${id} in the catalogue` })
    const refusal = usageRefusal(await partUsage(tx, id))
    if (refusal) throw createError({ statusCode: 409, statusMessage: 'Part in use', message: refusal })
    await tx.delete(tables.parts).where(eq(tables.parts.id, id))
    await audit(tx, user.id, 'part.delete', 'part', id, { name: part.name })
  })
  return { id, deleted: true }
})
