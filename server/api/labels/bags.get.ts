import { z } from 'zod'

const MAX_BAGS = 400
const Query = labelLayoutQuery.extend({
  buildDayId: z.coerce.number().int().positive().optional(),
  codes: z.string().max(4000).optional(),
  which: z.enum(['unsealed', 'all']).default('all'),
  kind: z.enum(['bags', 'pouches', 'both']).default('both'),
  download: z.enum(['0', '1', 'true', 'false']).optional().transform(v => v === '1' || v === 'true'),
})

/** Bag and pouch labels as a PDF on the chosen sheet layout, each with its bag's signed QR URL. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  const q = parseQuery(event, Query)
  const layout = layoutFromQuery(q)
  const db = useDb()
  let ids: number[]
  if (q.codes) {
    const codes = q.codes.toUpperCase().split(/[\s,]+/).filter(Boolean)
    ids = (await db.select({ id: tables.bags.id }).from(tables.bags).where(inArray(tables.bags.code, codes))).map(b => b.id)
    if (ids.length < new Set(codes).size) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'Some of those bag codes are not in Kitwright' })
  }
  else if (q.buildDayId) {
    const bags = await bagsOfDay(db, q.buildDayId)
    ids = bags.filter(b => q.which === 'all' || b.state === 'open' || b.state === 'packing').map(b => b.id)
  }
  else throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'Choose a build day or name the bags', data: { fields: { buildDayId: 'choose a build day' } } })
  if (!ids.length) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'No bags to label: create the bags for paid orders first' })
  if (ids.length > MAX_BAGS) throw createError({ statusCode: 413, statusMessage: 'Too many', message: `Print at most ${MAX_BAGS} bags at once` })
  const { publicUrl, labelSecret } = useRuntimeConfig(event)
  const labels = await bagLabels(db, ids, q.kind, publicUrl, labelSecret)
  const pdf = await renderLabels(labels, layout, { startAt: Math.min(q.startAt, layout.rows * layout.cols - 1), fonts: await labelFonts() })
  return sendPdf(event, pdf, `kitwright-${q.kind}-labels.pdf`, q.download)
})
