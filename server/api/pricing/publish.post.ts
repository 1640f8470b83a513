import { z } from 'zod'

const body = z.object({
  revisionId: z.number().int().positive('Choose a kit revision'),
  optionIds: z.array(z.number().int().positive()).max(50),
  inputs: pricingInputsSchema,
  offeringIds: z.array(z.number().int().positive()).max(100),
})

/**
 * Publishes the prices of one option choice: recomputed here from the inputs (never taken from the
 * page), written to the price history with an audit row, and set on the chosen offerings of this
 * revision. Orders already placed keep the price they were charged.
 */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { revisionId, optionIds, inputs, offeringIds } = await parseBody(event, body)
  const db = useDb()
  let priced: Awaited<ReturnType<typeof priceRevision>>
  try {
    priced = await priceRevision(db, revisionId, inputs)
  }
  catch (err) {
    if ((err as { statusCode?: number }).statusCode) throw err
    throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: (err as Error).message })
  }
  const key = [...optionIds].sort((a, b) => a - b).join(',')
  const choice = priced.choices.find(c => [...c.optionIds].sort((a, b) => a - b).join(',') === key)
  if (!choice) throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'That is not a valid choice of options for this revision', data: { fields: { optionIds: 'Not a valid choice' } } })
  const offerings = offeringIds.length ? await db.select().from(tables.offerings).where(inArray(tables.offerings.id, offeringIds)) : []
  if (offerings.length !== offeringIds.length || offerings.some(o => o.revisionId !== revisionId)) {
    throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'Prices can only be set on offerings of this revision', data: { fields: { offeringIds: 'Not an offering of this revision' } } })
  }
  const { memberPriceMinor, nonMemberPriceMinor, breakdown } = choice.price
  const id = await db.transaction(async (tx) => {
    const [row] = await tx.insert(tables.priceHistory).values({
      revisionId, optionIds: choice.optionIds, inputs: { ...inputs, offeringIds }, breakdown, memberPriceMinor, nonMemberPriceMinor, currency: inputs.currency, publishedBy: user.id,
    }).$returningId()
    if (offeringIds.length) await tx.update(tables.offerings).set({ memberPriceMinor, nonMemberPriceMinor }).where(inArray(tables.offerings.id, offeringIds))
    await audit(tx, user.id, 'price.publish', 'revision', revisionId, { priceHistoryId: row!.id, optionIds: choice.optionIds, memberPriceMinor, nonMemberPriceMinor, offeringIds, before: offerings.map(o => ({ id: o.id, memberPriceMinor: o.memberPriceMinor, nonMemberPriceMinor: o.nonMemberPriceMinor })) })
    return row!.id
  })
  return { id, memberPriceMinor, nonMemberPriceMinor, offeringIds }
})
