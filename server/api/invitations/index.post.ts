const INVITE_DAYS = 7

export default defineEventHandler(async (event) => {
  const me = await requireRole(event, 'organiser')
  const { email, roles } = await parseBody(event, inviteSchema)
  const { token, hash } = newToken()
  const db = useDb()
  await db.insert(tables.authTokens).values({ purpose: 'invite', tokenHash: hash, email, roles, createdBy: me.id, expiresAt: new Date(Date.now() + INVITE_DAYS * 86400_000) })
  await audit(db, me.id, 'invite', 'user', email, { roles })
  const link = appUrl(`/invite/${token}`)
  await sendMail({
    to: email,
    subject: `${me.name} invites you to Kitwright`,
    text: `Hello,\n\n${me.name} invites you to help with the club's build days on Kitwright as ${roles.join(' and ')}.\nTo accept, open:\n${link}\n\nThe link works once and for ${INVITE_DAYS} days.\n`,
  })
  setResponseStatus(event, 201)
  return { ok: true, email, roles }
})
