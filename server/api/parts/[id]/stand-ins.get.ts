import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const query = z.object({ line: z.coerce.number({ error: 'A line is a number' }).int().positive().optional() })

export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  const { id } = parseParams(event, params)
  const { line } = parseQuery(event, query)
  const db = useDb()
  const [part] = await db.select().from(tables.parts).where(eq(tables.parts.id, id))
  if (!part) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No part ${id} in the catalogue` })
  const lineRow = line ? await loadLineFlag(db, line) : null
  const standIns = await standInsForPart(db, id, lineRow)
  return {
    part: { ...part, display: displayValue(part) },
    noStandIns: lineRow?.noStandIns ?? false,
    standIns: standIns.map(s => ({ ...s, part: { ...s.part, display: displayValue(s.part) } })),
  }
})
