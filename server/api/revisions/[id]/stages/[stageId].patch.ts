import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive(), stageId: z.coerce.number().int().positive() })
const body = z.object({
  name: z.string().trim().min(1, 'Give the stage a name').max(80, 'At most 80 characters').optional(),
  position: z.number().int().min(1).max(1000).optional(),
})

/** Renames a stage or moves it in the build order. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id, stageId } = parseParams(event, params)
  const patch = await parseBody(event, body)
  await updateRevisionStage(useDb(), id, stageId, patch)
  return { ok: true }
})
