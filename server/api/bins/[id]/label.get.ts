import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const query = z.object({
  layout: z.string().max(40).default('thermal-62x29'),
  copies: z.coerce.number().int('Use a whole number').min(1, 'At least 1 copy').max(100, 'At most 100 copies').default(1),
})

/** One bin's label as a PDF: a QR of the signed label URL, the code to type under it, and the place. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const q = parseQuery(event, query)
  const layout = SHEET_LAYOUTS.find(l => l.id === q.layout)
  if (!layout) throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: `Unknown label layout "${q.layout}": use one of ${SHEET_LAYOUTS.map(l => l.id).join(', ')}` })
  const [bin] = await useDb().select().from(tables.bins).where(eq(tables.bins.id, id))
  if (!bin) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `There is no bin ${id}` })
  const { labelSecret, publicUrl } = useRuntimeConfig()
  const pdf = await renderLabels([{
    qrText: labelUrl(publicUrl, 'bin', bin.code, labelSecret),
    title: 'Bin',
    code: signCode('bin', bin.code, labelSecret),
    lines: bin.place ? [bin.place] : [],
    count: q.copies,
    tone: 'bin',
  }], layout, { fonts: await labelFonts() })
  setHeader(event, 'content-type', 'application/pdf')
  setHeader(event, 'content-disposition', `attachment; filename="bin-${bin.code}.pdf"`)
  return pdf
})
