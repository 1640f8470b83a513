import { z } from 'zod'

const onOff = z.boolean({ error: 'On (true) or off (false)' }).optional()
const body = z.object({ resistor: onOff, capacitor: onOff, inductor: onOff })
  .refine(b => Object.values(b).some(v => v !== undefined), { message: 'Switch at least one of resistor, capacitor, inductor' })

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const changes = await parseBody(event, body)
  const db = useDb()
  await db.transaction(async (tx) => {
    for (const [kind, enabled] of Object.entries(changes)) {
      if (enabled === undefined) continue
      await tx.insert(tables.swapSettings).values({ kind, enabled }).onDuplicateKeyUpdate({ set: { enabled } })
    }
    await audit(tx, user.id, 'swap-settings.change', 'swap_settings', null, changes)
  })
  return loadSwapSettings(db)
})
