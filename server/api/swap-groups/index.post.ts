export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const input = await parseBody(event, swapGroupBody)
  const id = await saveSwapGroup(useDb(), user.id, null, input)
  setResponseStatus(event, 201)
  return { id, ...input }
})
