// When MariaDB cannot be reached (stopped, restarting, the network to it cut), a request fails with a
// connection error deep in mysql2. Answer 503 with a plain message and a Retry-After instead of a bare
// 500 "Server Error", so the packing station and the pages can say "try again in a moment". The error
// body still carries no code, host or SQL (the security review's rule); the server log gets one line.
import type { H3Error } from 'h3'
import { DATABASE_UNAVAILABLE_MESSAGE, unreachableCode } from '../utils/database-errors'

export default defineNitroPlugin((nitroApp) => {
  // The hook runs before the error handlers build the response, so the error can be recast here.
  nitroApp.hooks.hook('error', (error, { event }) => {
    if (!event) return
    const err = error as H3Error
    if ((err.statusCode ?? 500) < 500) return
    const code = unreachableCode(err)
    if (!code) return
    console.warn(`[kitwright] database unreachable (${code}) during ${event.method} ${event.path.split('?')[0]}`)
    err.statusCode = 503
    err.statusMessage = 'Service Unavailable'
    err.message = DATABASE_UNAVAILABLE_MESSAGE
    err.data = { reason: 'database-unavailable' }
    err.unhandled = false
    err.fatal = false
    setResponseHeader(event, 'Retry-After', 5)
  })
})
