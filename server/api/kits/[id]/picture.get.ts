import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const TYPES: Record<string, string> = { jpg: 'image/jpeg', png: 'image/png', webp: 'image/webp' }

/** The kit's picture (public: kit pictures appear on the shop too). */
export default defineEventHandler(async (event) => {
  const { id } = parseParams(event, params)
  const kit = await requireKit(useDb(), id)
  const data = kit.pictureKey ? await useStorage('uploads').getItemRaw(kit.pictureKey) : null
  if (!kit.pictureKey || !data) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'This kit has no picture' })
  setResponseHeaders(event, {
    'Content-Type': TYPES[kit.pictureKey.split('.').pop()!] ?? 'application/octet-stream',
    'Cache-Control': 'private, max-age=300',
  })
  return data as Buffer
})
