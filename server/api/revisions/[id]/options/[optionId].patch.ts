import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive(), optionId: z.coerce.number().int().positive() })
const body = z.object({ name: z.string().trim().min(1, 'Give the option a name').max(80, 'At most 80 characters') })

export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id, optionId } = parseParams(event, params)
  const { name } = await parseBody(event, body)
  await updateRevisionOption(useDb(), id, optionId, name)
  return { ok: true }
})
