import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const body = z.object({
  decision: z.enum(['reworked', 'kept'], 'Choose reworked or kept'),
  toRevisionId: z.coerce.number({ error: 'Give the new revision' }).int().positive(),
})

/** Marks a sealed bag reworked to the newer revision (stock moves recorded) or kept on its old one. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const { decision, toRevisionId } = await parseBody(event, body)
  const db = useDb()
  const result = decision === 'reworked' ? await applyBagRework(db, id, toRevisionId, user.id) : await keepBagOnRevision(db, id, toRevisionId, user.id)
  await audit(db, user.id, `bag.rework.${decision}`, 'bag', id, { toRevisionId })
  return result
})
