/** Adds a supplier offer for a part: price breaks, minimum order and pack size. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const offer = await parseBody(event, offerBody)
  const db = useDb()
  const [part] = await db.select({ id: tables.parts.id }).from(tables.parts).where(eq(tables.parts.id, offer.partId))
  if (!part) throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: `There is no part ${offer.partId}`, data: { fields: { partId: 'Choose a part from the catalogue' } } })
  const [row] = await db.insert(tables.supplierOffers).values(offer).$returningId()
  await audit(db, user.id, 'offer.create', 'supplier_offer', row!.id, { partId: offer.partId, supplier: offer.supplier })
  setResponseStatus(event, 201)
  return { id: row!.id, ...offer }
})
