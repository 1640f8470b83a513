import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

/** Step 1 of the import: reads the uploaded CSV/XLSX into cells with a guessed column mapping. Changes nothing. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  await requireKit(useDb(), id)
  const length = Number(getRequestHeader(event, 'content-length') ?? 0)
  if (length > MAX_IMPORT_BYTES + 64 * 1024) importTooLarge(length)
  const file = (await readMultipartFormData(event))?.find(p => p.name === 'file' && p.filename !== undefined)
  if (!file) throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'Choose a CSV or XLSX file to upload', data: { fields: { file: 'Choose a file' } } })
  return readImportFile(file.filename || 'upload', file.data)
})
