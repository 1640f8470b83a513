import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  const { id } = parseParams(event, params)
  const detail = await partDetail(useDb(), id)
  if (!detail) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No part ${id} in the catalogue` })
  return detail
})
