import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
// The code is printed on the bin's label, so it is not changed here: add a new bin instead.
const body = binBody.pick({ place: true, walkOrder: true }).partial()

/** Changes a bin's place description or walk order. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const changes = await parseBody(event, body)
  const db = useDb()
  const [bin] = await db.select().from(tables.bins).where(eq(tables.bins.id, id))
  if (!bin) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `There is no bin ${id}` })
  if (Object.keys(changes).length) await db.update(tables.bins).set(changes).where(eq(tables.bins.id, id))
  return { ...bin, ...changes }
})
