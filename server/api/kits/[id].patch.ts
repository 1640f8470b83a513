import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const body = z.object({
  name: z.string().trim().min(1, 'Give the kit a name').max(120, 'At most 120 characters').optional(),
  description: z.string().trim().max(5000, 'At most 5000 characters').nullish(),
  designerCredit: z.string().trim().max(255, 'At most 255 characters').nullish(),
  transmits: z.boolean().optional(),
})

export default defineEventHandler(async (event) => {
  const me = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const patch = await parseBody(event, body)
  const db = useDb()
  await requireKit(db, id)
  if (Object.keys(patch).length) await db.update(tables.kits).set(patch).where(eq(tables.kits.id, id))
  await audit(db, me.id, 'kit.update', 'kit', id, patch)
  return kitDetail(db, id)
})
