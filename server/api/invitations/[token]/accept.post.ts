import { z } from 'zod'

const params = z.object({ token: z.string().min(20).max(200) })

/** Accepting creates the account, or adds the invited roles to an existing one. */
export default defineEventHandler(async (event) => {
  const { token } = parseParams(event, params)
  const body = await parseBody(event, acceptInviteSchema)
  const db = useDb()
  const userId = await db.transaction(async (tx) => {
    const row = await useToken(tx, 'invite', token)
    let user = await tx.query.users.findFirst({ where: eq(tables.users.email, row.email) })
    if (!user) {
      if (!body.name) badRequest([{ code: 'custom', path: ['name'], message: 'Enter your name', input: '' } as never])
      const checked = passwordField.safeParse(body.password)
      if (!checked.success) badRequest(checked.error.issues.map(i => ({ ...i, path: ['password'] })))
      const passwordHash = await hashPassword(body.password)
      const [created] = await tx.insert(tables.users).values({ email: row.email, name: body.name!, passwordHash }).$returningId()
      user = (await tx.query.users.findFirst({ where: eq(tables.users.id, created!.id) }))!
    }
    else if (!(await verifyPassword(user.passwordHash, body.password))) {
      throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'This address already has an account: enter its current password to accept', data: { fields: { password: 'Enter the password of your existing account' } } })
    }
    const roles = ['builder', ...(row.roles ?? [])] as ('organiser' | 'packer' | 'builder')[]
    for (const role of new Set(roles)) {
      await tx.insert(tables.userRoles).values({ userId: user.id, role }).onDuplicateKeyUpdate({ set: { role } })
    }
    await audit(tx, user.id, 'roles.accept-invite', 'user', user.id, { roles })
    return user.id
  })
  return { user: await signIn(event, userId) }
})
