import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Moves a report on at the desk: being handled, back to open, resolved (replaced / not needed) or declined. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser', 'packer')
  const { id } = parseParams(event, params)
  const change = await parseBody(event, reportStateChange)
  const db = useDb()
  await changeReportState(db, id, change, user.id)
  const [view] = await describeReports(db, await db.select().from(tables.reports).where(eq(tables.reports.id, id)))
  return view
})
