import { z } from 'zod'

const Body = z.object({ bagId: z.number().int().positive() })

/** Takes back the last scan packed into the bag. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser', 'packer')
  const { bagId } = await parseBody(event, Body)
  return undoLast(useDb(), bagId, user)
})
