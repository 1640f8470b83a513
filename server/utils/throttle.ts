import type { H3Event } from 'h3'

const WINDOW_MS = 15 * 60 * 1000
const PER_EMAIL = Number(process.env.KW_SIGNIN_MAX_PER_EMAIL || 5)
const PER_IP = Number(process.env.KW_SIGNIN_MAX_PER_IP || 30)

function keys(event: H3Event, email: string) {
  const ip = getRequestIP(event, { xForwardedFor: process.env.KW_TRUST_PROXY === 'true' }) || 'unknown'
  return { emailKey: `email:${email}`, ipKey: `ip:${ip}` }
}

/** Refuses a sign-in with 429 after too many recent failures for the address or the IP. */
export async function checkSignInThrottle(event: H3Event, email: string) {
  const { emailKey, ipKey } = keys(event, email)
  const since = new Date(Date.now() - WINDOW_MS)
  const rows = await useDb().select({ key: tables.signInFailures.key, n: sql<number>`count(*)` })
    .from(tables.signInFailures)
    .where(and(inArray(tables.signInFailures.key, [emailKey, ipKey]), gt(tables.signInFailures.failedAt, since)))
    .groupBy(tables.signInFailures.key)
  const count = (k: string) => Number(rows.find(r => r.key === k)?.n ?? 0)
  if (count(emailKey) >= PER_EMAIL || count(ipKey) >= PER_IP) {
    setResponseHeader(event, 'Retry-After', 900)
    throw createError({ statusCode: 429, statusMessage: 'Too many attempts', message: 'Too many failed sign-ins. Wait 15 minutes or reset your password.' })
  }
}

export async function recordSignInFailure(event: H3Event, email: string) {
  const { emailKey, ipKey } = keys(event, email)
  await useDb().insert(tables.signInFailures).values([{ key: emailKey }, { key: ipKey }])
}

export async function clearSignInFailures(email: string) {
  await useDb().delete(tables.signInFailures).where(eq(tables.signInFailures.key, `email:${email}`))
}
