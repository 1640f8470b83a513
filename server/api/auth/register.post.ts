/** Self sign-up always creates a builder; other roles come by invitation. */
export default defineEventHandler(async (event) => {
  const body = await parseBody(event, registerSchema)
  const db = useDb()
  const existing = await db.query.users.findFirst({ where: eq(tables.users.email, body.email) })
  if (existing) {
    throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'That e-mail address already has an account: sign in or reset the password', data: { fields: { email: 'Already registered' } } })
  }
  const passwordHash = await hashPassword(body.password)
  const id = await db.transaction(async (tx) => {
    const [row] = await tx.insert(tables.users).values({ email: body.email, name: body.name, passwordHash }).$returningId()
    await tx.insert(tables.userRoles).values({ userId: row!.id, role: 'builder' })
    return row!.id
  })
  setResponseStatus(event, 201)
  return { user: await signIn(event, id) }
})
