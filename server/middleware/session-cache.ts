// Sessions are sealed cookies: every signed-in request would otherwise unseal its cookie (key
// derivation and an HMAC through WebCrypto, about 1 ms of CPU). The same cookie always unseals to the
// same session, so this process remembers what a cookie unsealed to, for a minute at most and never
// past the session's own age limit, and hands each request its own copy. Nothing is shared between
// app processes and nothing outlives the cookie: a new sign-in seals a new cookie.
import type { H3Event } from 'h3'

const MAX_ENTRIES = 5000
const KEEP_MS = 60_000

interface Unsealed { id: string, createdAt: number, data: Record<string, unknown> }
const remembered = new Map<string, { session: Unsealed, until: number }>()

function sessionOptions() {
  const { session } = useRuntimeConfig() as unknown as { session: { name: string, maxAge: number } }
  return session
}

function sessionsOf(event: H3Event) {
  const ctx = event.context as { sessions?: Record<string, Unsealed> }
  ctx.sessions ||= Object.create(null) as Record<string, Unsealed>
  return ctx.sessions
}

export default defineEventHandler(async (event) => {
  const { name, maxAge } = sessionOptions()
  // A session sent in h3's header form is left to h3 alone.
  if (getRequestHeader(event, `x-${name.toLowerCase()}-session`)) return
  const sealed = getCookie(event, name)
  if (!sealed) return
  const now = Date.now()
  const hit = remembered.get(sealed)
  if (hit && hit.until > now) {
    sessionsOf(event)[name] = { id: hit.session.id, createdAt: hit.session.createdAt, data: structuredClone(hit.session.data) }
    return
  }
  if (hit) remembered.delete(sealed)
  await getUserSession(event) // unseals once; h3 keeps the result on the event for the handler
  const session = sessionsOf(event)[name]
  if (!session?.id || !(session.data as { user?: unknown }).user) return
  const until = Math.min(now + KEEP_MS, session.createdAt + maxAge * 1000)
  if (until <= now) return
  remembered.set(sealed, { session: { id: session.id, createdAt: session.createdAt, data: structuredClone(session.data) }, until })
  if (remembered.size > MAX_ENTRIES) {
    for (const key of remembered.keys()) {
      remembered.delete(key)
      if (remembered.size <= MAX_ENTRIES * 0.9) break
    }
  }
})
