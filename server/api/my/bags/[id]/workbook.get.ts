import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** The builder's bag as an .xlsx workbook: lines as packed, stand-ins and warnings, safety notes. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder')
  const { id } = parseParams(event, params)
  const view = await loadBagForBuilder(useDb(), id, user.id)
  const bytes = await buildBomWorkbook(bagWorkbookInput(view))
  setResponseHeaders(event, {
    'Content-Type': 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
    'Content-Disposition': `attachment; filename="bag-${view.bag.code}.xlsx"`,
  })
  return bytes
})
