import { randomBytes } from 'node:crypto'
import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const MAX_PICTURE_BYTES = 3 * 1024 * 1024

/** The picture's type from its first bytes (JPEG, PNG, WebP), never from its name or header. */
function pictureType(b: Uint8Array): 'jpg' | 'png' | 'webp' | null {
  if (b[0] === 0xFF && b[1] === 0xD8 && b[2] === 0xFF) return 'jpg'
  if ([0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A].every((x, i) => b[i] === x)) return 'png'
  const ascii = (from: number, to: number) => String.fromCharCode(...b.subarray(from, to))
  if (b.length > 12 && ascii(0, 4) === 'RIFF' && ascii(8, 12) === 'WEBP') return 'webp'
  return null
}

export default defineEventHandler(async (event) => {
  const me = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const db = useDb()
  const kit = await requireKit(db, id)
  if (Number(getRequestHeader(event, 'content-length') ?? 0) > MAX_PICTURE_BYTES + 64 * 1024) {
    throw createError({ statusCode: 413, statusMessage: 'File too large', message: 'The picture is larger than 3 MB: make it smaller and try again.' })
  }
  const file = (await readMultipartFormData(event))?.find(p => p.name === 'picture' && p.filename !== undefined)
  if (!file || file.data.length === 0) throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'Choose a picture to upload', data: { fields: { picture: 'Choose a picture' } } })
  if (file.data.length > MAX_PICTURE_BYTES) throw createError({ statusCode: 413, statusMessage: 'File too large', message: 'The picture is larger than 3 MB: make it smaller and try again.' })
  const ext = pictureType(file.data)
  if (!ext) throw createError({ statusCode: 422, statusMessage: 'Unreadable file', message: 'The picture must be a JPEG, PNG or WebP image.', data: { fields: { picture: 'JPEG, PNG or WebP only' } } })
  const storage = useStorage('uploads')
  const key = `kits:${id}-${randomBytes(6).toString('hex')}.${ext}`
  await storage.setItemRaw(key, file.data)
  await db.update(tables.kits).set({ pictureKey: key }).where(eq(tables.kits.id, id))
  if (kit.pictureKey) await storage.removeItem(kit.pictureKey)
  await audit(db, me.id, 'kit.picture', 'kit', id, { bytes: file.data.length, type: ext })
  return { ok: true }
})
