import { z } from 'zod'

const Body = z.object({ reason: z.string().trim().min(3, 'Say why the bag is unsealed (at least 3 characters)').max(240) })

/** An organiser unseals a bag with a reason: stock goes back to its lots and the bag can be packed again. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { code } = parseParams(event, BagCodeParams)
  const { reason } = await parseBody(event, Body)
  const db = useDb()
  return unsealBag(db, await bagIdByCode(db, code), user, reason)
})
