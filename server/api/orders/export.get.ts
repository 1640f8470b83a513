import type ExcelJSModule from 'exceljs'
import { z } from 'zod'

const query = orderQuery.extend({ format: z.enum(['csv', 'xlsx']).default('xlsx') })

/** The filtered orders as a workbook or CSV; text cells that a spreadsheet would run as formulas are neutralised. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { format, ...filters } = parseQuery(event, query)
  const table = orderExportRows(await listOrders(useDb(), filters))
  const stem = `orders-${new Date().toISOString().slice(0, 10)}`
  if (format === 'csv') {
    setResponseHeaders(event, { 'Content-Type': 'text/csv; charset=utf-8', 'Content-Disposition': `attachment; filename="${stem}.csv"` })
    return toCsv(table)
  }
  const ExcelJS = await loadExcelBundle()
  const book = new ExcelJS.Workbook()
  const sheet = book.addWorksheet('Orders')
  for (const row of table) sheet.addRow(row.map(c => (typeof c === 'string' ? neutraliseCell(c) : c)))
  sheet.getRow(1).font = { bold: true }
  sheet.views = [{ state: 'frozen', ySplit: 1 }]
  sheet.columns.forEach((col, i) => { col.width = Math.min(40, Math.max(8, ...table.map(r => String(r[i] ?? '').length + 2))) })
  setResponseHeaders(event, { 'Content-Type': 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet', 'Content-Disposition': `attachment; filename="${stem}.xlsx"` })
  return Buffer.from(await book.xlsx.writeBuffer())
})

/** exceljs from its self-contained bundle: the package entry pulls a dependency the server build does not copy. */
async function loadExcelBundle(): Promise<typeof ExcelJSModule> {
  // @ts-expect-error the prebuilt bundle ships no types; it has the same API as 'exceljs'
  const mod = await import('exceljs/dist/exceljs.min.js')
  return (mod.default ?? mod) as typeof ExcelJSModule
}
