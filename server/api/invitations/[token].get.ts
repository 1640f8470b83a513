import { z } from 'zod'

const params = z.object({ token: z.string().min(20).max(200) })

export default defineEventHandler(async (event) => {
  const { token } = parseParams(event, params)
  const row = await peekToken('invite', token)
  const existing = await useDb().query.users.findFirst({ where: eq(tables.users.email, row.email), columns: { id: true } })
  return { email: row.email, roles: row.roles ?? [], hasAccount: !!existing, expiresAt: row.expiresAt }
})
