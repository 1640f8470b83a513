import { z } from 'zod'

const Query = labelLayoutQuery.extend({
  codes: z.string().max(4000).optional(),
  download: z.enum(['0', '1', 'true', 'false']).optional().transform(v => v === '1' || v === 'true'),
})

/** Bin labels as a PDF: the signed bin code as QR and text, its parts and place. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  const q = parseQuery(event, Query)
  const layout = layoutFromQuery(q)
  const codes = q.codes ? q.codes.toUpperCase().split(/[\s,]+/).filter(Boolean) : 'all'
  const { publicUrl, labelSecret } = useRuntimeConfig(event)
  const labels = await binLabels(useDb(), codes, publicUrl, labelSecret)
  if (!labels.length) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'No such bins' })
  const pdf = await renderLabels(labels, layout, { startAt: Math.min(q.startAt, layout.rows * layout.cols - 1), fonts: await labelFonts() })
  return sendPdf(event, pdf, 'kitwright-bin-labels.pdf', q.download)
})
