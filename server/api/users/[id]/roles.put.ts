import { z } from 'zod'

const params = z.object({ id: z.coerce.number().int().positive() })
const body = z.object({ roles: z.array(z.enum(ROLE_NAMES)).min(1, 'Keep at least one role') })

export default defineEventHandler(async (event) => {
  const me = await requireRole(event, 'organiser')
  const { id } = parseParams(event, params)
  const { roles } = await parseBody(event, body)
  if (id === me.id && !roles.includes('organiser')) {
    throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'You cannot remove your own organiser role' })
  }
  const db = useDb()
  await db.transaction(async (tx) => {
    const user = await tx.query.users.findFirst({ where: eq(tables.users.id, id), columns: { id: true } })
    if (!user) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'No such person' })
    const before = (await tx.select().from(tables.userRoles).where(eq(tables.userRoles.userId, id))).map(r => r.role)
    await tx.delete(tables.userRoles).where(eq(tables.userRoles.userId, id))
    await tx.insert(tables.userRoles).values(roles.map(role => ({ userId: id, role })))
    await audit(tx, me.id, 'roles.change', 'user', id, { before, after: roles })
  })
  return { id, roles }
})
