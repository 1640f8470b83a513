/** The pricing inputs the pricing page starts from. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  return loadPricingInputs(useDb())
})
