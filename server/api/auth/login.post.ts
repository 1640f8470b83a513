export default defineEventHandler(async (event) => {
  const { email, password } = await parseBody(event, loginSchema)
  await checkSignInThrottle(event, email)
  const user = await useDb().query.users.findFirst({ where: eq(tables.users.email, email) })
  if (!user || !(await verifyPassword(user.passwordHash, password))) {
    await recordSignInFailure(event, email)
    throw createError({ statusCode: 401, statusMessage: 'Unauthorized', message: 'Wrong e-mail or password' })
  }
  await clearSignInFailures(email)
  return { user: await signIn(event, user.id) }
})
