import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive(), stageId: z.coerce.number().int().positive() })

/** Deletes a stage; its lines stay, without a stage. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id, stageId } = parseParams(event, params)
  await deleteRevisionStage(useDb(), id, stageId)
  return { ok: true }
})
