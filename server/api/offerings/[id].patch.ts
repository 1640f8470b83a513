import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const body = offeringBody.pick({ allowedOptionIds: true, memberPriceMinor: true, nonMemberPriceMinor: true }).partial()

/** Changes an offering's allowed options or prices (orders already placed keep what they paid). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const patch = await parseBody(event, body)
  const db = useDb()
  const [offering] = await db.select().from(tables.offerings).where(eq(tables.offerings.id, id))
  if (!offering) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such offering' })
  if (patch.allowedOptionIds) await checkOffering(db, offering.revisionId, patch.allowedOptionIds)
  await db.update(tables.offerings).set(patch).where(eq(tables.offerings.id, id))
  await audit(db, user.id, 'offering.update', 'offering', id, { before: { allowedOptionIds: offering.allowedOptionIds, memberPriceMinor: offering.memberPriceMinor, nonMemberPriceMinor: offering.nonMemberPriceMinor }, after: patch })
  return { id }
})
