import { z } from 'zod'

const body = z.object({ scan: z.string({ error: 'Scan or type the bag label' }).trim().min(1, 'Scan or type the bag label').max(MAX_SCAN_LENGTH, 'That is too long for a label') })

/** At the door: a scanned bag label marks the sealed bag collected by its builder. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser', 'packer')
  const { scan } = await parseBody(event, body)
  return collectBagByScan(useDb(), scan, user.id)
})
