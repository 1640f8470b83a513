import type { H3Event } from 'h3'
import type { Role } from '#shared/types/auth'

/** Who may call this route: 401 when signed out, 403 when no role matches. Returns the session user. */
export async function requireRole(event: H3Event, ...roles: Role[]) {
  const { user } = await requireUserSession(event)
  if (roles.length && !roles.some(r => user.roles.includes(r))) {
    throw createError({ statusCode: 403, statusMessage: 'Forbidden', message: `This needs the ${roles.join(' or ')} role` })
  }
  return user
}

/** Signs a user in with their current roles from the database. */
export async function signIn(event: H3Event, userId: number) {
  const db = useDb()
  const user = await db.query.users.findFirst({ where: eq(tables.users.id, userId) })
  if (!user) throw createError({ statusCode: 404, statusMessage: 'Not found' })
  const roles = (await db.select().from(tables.userRoles).where(eq(tables.userRoles.userId, userId))).map(r => r.role)
  const sessionUser = { id: user.id, email: user.email, name: user.name, roles }
  await replaceUserSession(event, { user: sessionUser, loggedInAt: Date.now() })
  return sessionUser
}

/** Records an audit row (price changes, refunds, unseals, role changes). */
export async function audit(db: Db | Tx, userId: number | null, action: string, subjectType: string, subjectId: string | number | null, detail?: Record<string, unknown>) {
  await db.insert(tables.auditLog).values({ userId, action, subjectType, subjectId: subjectId == null ? null : String(subjectId), detail: detail ?? null })
}
