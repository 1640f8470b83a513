import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Replaces a supplier offer (its part stays). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const { partId, ...offer } = await parseBody(event, offerBody)
  const db = useDb()
  const [had] = await db.select().from(tables.supplierOffers).where(eq(tables.supplierOffers.id, id))
  if (!had) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `There is no supplier offer ${id}` })
  if (partId !== had.partId) throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'An offer stays with its part: add a new offer for another part', data: { fields: { partId: 'An offer stays with its part' } } })
  await db.update(tables.supplierOffers).set(offer).where(eq(tables.supplierOffers.id, id))
  await audit(db, user.id, 'offer.update', 'supplier_offer', id, { before: had.breaks, after: offer.breaks })
  return { id, partId, ...offer }
})
