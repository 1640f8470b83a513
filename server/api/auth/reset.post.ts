export default defineEventHandler(async (event) => {
  const { token, password } = await parseBody(event, resetSchema)
  const db = useDb()
  const passwordHash = await hashPassword(password)
  const userId = await db.transaction(async (tx) => {
    const row = await useToken(tx, 'reset', token)
    await tx.update(tables.users).set({ passwordHash }).where(eq(tables.users.id, row.userId!))
    return row.userId!
  })
  const user = await signIn(event, userId)
  await clearSignInFailures(user.email)
  return { user }
})
