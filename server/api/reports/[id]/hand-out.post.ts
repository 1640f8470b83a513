import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Hands out spares for a report (ledger 'spares' movements) and resolves it, in one transaction. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser', 'packer')
  const { id } = parseParams(event, params)
  const body = await parseBody(event, handOutBody)
  const db = useDb()
  await handOutSpares(db, id, body, user.id)
  const [view] = await describeReports(db, await db.select().from(tables.reports).where(eq(tables.reports.id, id)))
  return view
})
