import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive(), photoId: z.coerce.number().int().positive() })

/** A report's photo: for the builder who filed it, and for organisers and packers at the desk. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'builder', 'organiser', 'packer')
  const { id, photoId } = parseParams(event, params)
  const desk = user.roles.includes('organiser') || user.roles.includes('packer')
  const [photo] = await useDb().select({ key: tables.reportPhotos.storageKey, type: tables.reportPhotos.contentType })
    .from(tables.reportPhotos).innerJoin(tables.reports, eq(tables.reports.id, tables.reportPhotos.reportId))
    .where(and(eq(tables.reportPhotos.id, photoId), eq(tables.reportPhotos.reportId, id), desk ? undefined : eq(tables.reports.userId, user.id)))
  const data = photo ? await readPhoto(photo.key) : null
  if (!photo || !data) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'No such photo' })
  setResponseHeaders(event, { 'Content-Type': photo.type, 'Content-Disposition': 'inline', 'Cache-Control': 'private, max-age=300' })
  return data
})
