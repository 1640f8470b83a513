import { z } from 'zod'

const body = z.object({
  name: z.string().trim().min(1, 'Give the kit a name').max(120, 'At most 120 characters'),
  description: z.string().trim().max(5000, 'At most 5000 characters').nullish(),
  designerCredit: z.string().trim().max(255, 'At most 255 characters').nullish(),
  transmits: z.boolean().optional(),
})

export default defineEventHandler(async (event) => {
  const me = await requireRole(event, 'organiser')
  const input = await parseBody(event, body)
  const db = useDb()
  const id = await createKit(db, input)
  await audit(db, me.id, 'kit.create', 'kit', id, { name: input.name })
  setResponseStatus(event, 201)
  return kitDetail(db, id)
})
