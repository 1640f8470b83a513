import { z } from 'zod'

const format = z.object({ format: z.enum(['csv', 'xlsx'], { error: 'Choose csv or xlsx' }).default('xlsx') })

/** The buy list as a workbook or CSV, grouped by supplier, every text cell neutralised. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const q = parseQuery(event, reconcileQuery)
  const { format: kind } = parseQuery(event, format)
  const db = useDb()
  const data = await loadReconcileData(db, q.revisionId, q.mix)
  const report = reconcileReport(data, q.target)
  const list = await buyListReport(db, data, report, { spares: q.spares ?? DEFAULT_SPARES, currency: q.currency })
  const title = `Buy list: ${report.revision.kitName} ${report.revision.label}, ${report.target} kits`
  const name = `buy-list-${report.revision.kitName}-${report.revision.label}-${report.target}`.toLowerCase().replace(/[^a-z0-9-]+/g, '-')
  if (kind === 'csv') {
    setHeader(event, 'content-type', 'text/csv; charset=utf-8')
    setHeader(event, 'content-disposition', `attachment; filename="${name}.csv"`)
    return buyListCsv(list, title)
  }
  setHeader(event, 'content-type', 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet')
  setHeader(event, 'content-disposition', `attachment; filename="${name}.xlsx"`)
  return buyListWorkbook(list, title)
})
