/** Saves the pricing inputs as the defaults (an audit row keeps the old ones). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const inputs = await parseBody(event, pricingInputsSchema)
  const db = useDb()
  const before = await loadPricingInputs(db)
  await savePricingInputs(db, inputs)
  await audit(db, user.id, 'pricing.defaults', 'settings', 'pricing.defaults', { before, after: inputs })
  return inputs
})
