/** Looks up a single-use token and marks it used in the same statement, so it cannot be used twice. */
export async function useToken(tx: Tx, purpose: 'invite' | 'reset', token: string) {
  const hash = hashToken(token)
  const row = await tx.query.authTokens.findFirst({ where: and(eq(tables.authTokens.tokenHash, hash), eq(tables.authTokens.purpose, purpose)) })
  if (!row) throw createError({ statusCode: 400, statusMessage: 'Invalid link', message: 'This link is not valid. Ask for a new one.' })
  if (row.usedAt) throw createError({ statusCode: 400, statusMessage: 'Used link', message: 'This link has already been used. Ask for a new one.' })
  if (row.expiresAt.getTime() < Date.now()) throw createError({ statusCode: 400, statusMessage: 'Expired link', message: 'This link has expired. Ask for a new one.' })
  const [res] = await tx.update(tables.authTokens).set({ usedAt: new Date() })
    .where(and(eq(tables.authTokens.id, row.id), isNull(tables.authTokens.usedAt)))
  if (res.affectedRows !== 1) throw createError({ statusCode: 400, statusMessage: 'Used link', message: 'This link has already been used. Ask for a new one.' })
  return row
}

/** Reads a token without using it (to show the invitation page). */
export async function peekToken(purpose: 'invite' | 'reset', token: string) {
  const row = await useDb().query.authTokens.findFirst({ where: and(eq(tables.authTokens.tokenHash, hashToken(token)), eq(tables.authTokens.purpose, purpose)) })
  if (!row) throw createError({ statusCode: 404, statusMessage: 'Invalid link', message: 'This link is not valid. Ask for a new one.' })
  if (row.usedAt) throw createError({ statusCode: 410, statusMessage: 'Used link', message: 'This link has already been used. Ask for a new one.' })
  if (row.expiresAt.getTime() < Date.now()) throw createError({ statusCode: 410, statusMessage: 'Expired link', message: 'This link has expired. Ask for a new one.' })
  return row
}
