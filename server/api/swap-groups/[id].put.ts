import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const input = await parseBody(event, swapGroupBody)
  await saveSwapGroup(useDb(), user.id, id, input)
  return { id, ...input }
})
