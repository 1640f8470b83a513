const RESET_HOURS = 2

/** Always answers the same, so the reply never tells whether an address has an account. */
export default defineEventHandler(async (event) => {
  const { email } = await parseBody(event, resetRequestSchema)
  await checkSignInThrottle(event, email)
  const db = useDb()
  const user = await db.query.users.findFirst({ where: eq(tables.users.email, email) })
  if (user) {
    const { token, hash } = newToken()
    await db.insert(tables.authTokens).values({ purpose: 'reset', tokenHash: hash, email, userId: user.id, expiresAt: new Date(Date.now() + RESET_HOURS * 3600_000) })
    const link = appUrl(`/reset/${token}`)
    await sendMailQuietly({
      to: email,
      subject: 'Reset your Kitwright password',
      text: `Hello ${user.name},\n\nSomeone asked to reset the password for this address. To choose a new password, open:\n${link}\n\nThe link works once and for ${RESET_HOURS} hours. If you did not ask, ignore this message.\n`,
    })
  }
  else {
    await recordSignInFailure(event, email)
  }
  return { ok: true, message: 'If that address has an account, a reset link is on its way.' }
})
