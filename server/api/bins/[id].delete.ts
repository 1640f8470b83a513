import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Removes a bin that has never held a lot (a bin with history keeps its ledger rows meaningful). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const db = useDb()
  const [bin] = await db.select().from(tables.bins).where(eq(tables.bins.id, id))
  if (!bin) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `There is no bin ${id}` })
  const [used] = await db.select({ id: tables.lots.id }).from(tables.lots).where(eq(tables.lots.binId, id)).limit(1)
  if (used) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `Bin ${bin.code} has held stock, so its history stays: leave it empty instead` })
  await db.delete(tables.bins).where(eq(tables.bins.id, id))
  await audit(db, user.id, 'bin.delete', 'bin', id, { code: bin.code })
  return { deleted: id }
})
