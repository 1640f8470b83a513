// Telling a database that is out of reach from a query that went wrong (see server/plugins/database-unavailable.ts).

/** Socket and protocol codes that mean the connection is gone, when mysql2 marks the error fatal. */
const CONNECTION_GONE = new Set([
  'ECONNREFUSED', 'ECONNRESET', 'EPIPE', 'ETIMEDOUT', 'EHOSTUNREACH', 'ENETUNREACH', 'ENOTFOUND', 'ENOENT',
  'PROTOCOL_CONNECTION_LOST', 'PROTOCOL_SEQUENCE_TIMEOUT', 'PROTOCOL_ENQUEUE_AFTER_FATAL_ERROR', 'PROTOCOL_ENQUEUE_AFTER_QUIT',
])
/** Errors the server itself sends when it cannot serve anyone just now. */
const SERVER_AWAY = new Set(['ER_CON_COUNT_ERROR', 'ER_SERVER_SHUTDOWN', 'ER_NORMAL_SHUTDOWN', 'ER_SHUTDOWN_COMPLETE', 'ER_CONNECTION_KILLED'])

export const DATABASE_UNAVAILABLE_MESSAGE = 'Kitwright cannot reach its database just now: wait a moment and try again.'

/**
 * The reason (an error code) when an error, or one of its causes (h3 → Drizzle → mysql2), says the
 * database is out of reach; null for every other error, including a file that is missing on disk.
 */
export function unreachableCode(error: unknown): string | null {
  let e = error as { code?: unknown, cause?: unknown, fatal?: unknown } | undefined
  for (let depth = 0; e && typeof e === 'object' && depth < 6; depth++) {
    const code = typeof e.code === 'string' ? e.code : null
    // mysql2 marks every error that ends a connection as fatal, with the socket's code or none.
    if (e.fatal === true && (code === null || CONNECTION_GONE.has(code))) return code ?? 'CONNECTION_CLOSED'
    if (code && SERVER_AWAY.has(code)) return code
    e = e.cause as typeof e
  }
  return null
}
