import { z } from 'zod'

const body = z.object({ text: z.string({ error: 'Scan or type a bin code' }).trim().min(1, 'Scan or type a bin code').max(200, 'That is too long for a bin code') })

/** Reads a scanned bin label (signed URL or token) or a typed bin code, and returns the bin. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { text } = await parseBody(event, body)
  return findBinByScan(useDb(), text, useRuntimeConfig().labelSecret)
})
