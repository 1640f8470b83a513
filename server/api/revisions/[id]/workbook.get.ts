import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const query = z.object({
  format: z.enum(['xlsx', 'csv']).default('xlsx'),
  options: z.string().regex(/^(\d+(,\d+)*)?$/, 'A comma-separated list of option ids').default(''),
})

/** The BOM workbook (.xlsx or .csv) of a revision for a choice of options. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const { format, options } = parseQuery(event, query)
  const optionIds = options ? options.split(',').map(Number) : []
  const { input, fileStem } = await revisionWorkbookInput(useDb(), id, optionIds)
  const xlsx = format === 'xlsx'
  setResponseHeaders(event, {
    'Content-Type': xlsx ? 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet' : 'text/csv; charset=utf-8',
    'Content-Disposition': `attachment; filename="${fileStem}.${format}"`,
  })
  return xlsx ? buildBomWorkbook(input) : `\uFEFF${workbookCsv(input)}`
})
