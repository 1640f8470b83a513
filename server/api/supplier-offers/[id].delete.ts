import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Removes a supplier offer. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const db = useDb()
  const [res] = await db.delete(tables.supplierOffers).where(eq(tables.supplierOffers.id, id))
  if (res.affectedRows !== 1) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `There is no supplier offer ${id}` })
  await audit(db, user.id, 'offer.delete', 'supplier_offer', id)
  return { deleted: id }
})
