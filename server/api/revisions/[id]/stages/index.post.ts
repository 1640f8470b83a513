import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const body = z.object({ name: z.string().trim().min(1, 'Give the stage a name').max(80, 'At most 80 characters') })

/** Adds a stage at the end of a draft's build order. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const { name } = await parseBody(event, body)
  const stage = await addRevisionStage(useDb(), id, name)
  setResponseStatus(event, 201)
  return stage
})
