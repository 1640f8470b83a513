import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const db = useDb()
  await db.transaction(async (tx) => {
    const [group] = await tx.select().from(tables.swapGroups).where(eq(tables.swapGroups.id, id)).for('update')
    if (!group) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No swap group ${id}` })
    await tx.delete(tables.swapGroups).where(eq(tables.swapGroups.id, id))
    await audit(tx, user.id, 'swap-group.delete', 'swap_group', id, { name: group.name })
  })
  return { id, deleted: true }
})
