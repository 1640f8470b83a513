import { describe, expect, it } from 'vitest'
import { unreachableCode } from '../../server/utils/database-errors'

/** An error shaped as mysql2 gives it for a lost connection. */
function mysql2Error(code: string | undefined, fatal = true) {
  return Object.assign(new Error(code ?? 'Can\'t add new command when connection is in closed state'), { code, fatal })
}

describe('unreachableCode', () => {
  it('finds a lost connection behind h3 and Drizzle wrappers', () => {
    const drizzle = Object.assign(new Error('Failed query: select 1'), { cause: mysql2Error('ECONNREFUSED') })
    const h3 = Object.assign(new Error('Failed query'), { statusCode: 500, cause: drizzle })
    expect(unreachableCode(h3)).toBe('ECONNREFUSED')
    expect(unreachableCode(mysql2Error('PROTOCOL_CONNECTION_LOST'))).toBe('PROTOCOL_CONNECTION_LOST')
    expect(unreachableCode(mysql2Error(undefined))).toBe('CONNECTION_CLOSED')
  })

  it('knows the server turning everyone away', () => {
    expect(unreachableCode(mysql2Error('ER_CON_COUNT_ERROR', false))).toBe('ER_CON_COUNT_ERROR')
    expect(unreachableCode(mysql2Error('ER_SERVER_SHUTDOWN', false))).toBe('ER_SERVER_SHUTDOWN')
  })

  it('leaves every other error alone', () => {
    // A missing file (uploads) is ENOENT too, but not fatal to a database connection.
    expect(unreachableCode(Object.assign(new Error('no such file'), { code: 'ENOENT' }))).toBeNull()
    expect(unreachableCode(mysql2Error('ER_DUP_ENTRY', false))).toBeNull()
    expect(unreachableCode(mysql2Error('ER_LOCK_DEADLOCK', false))).toBeNull()
    expect(unreachableCode(mysql2Error('ER_PARSE_ERROR', false))).toBeNull()
    expect(unreachableCode(new Error('plain'))).toBeNull()
    expect(unreachableCode(undefined)).toBeNull()
    expect(unreachableCode('text')).toBeNull()
  })

  it('stops on a cycle of causes', () => {
    const a: { cause?: unknown } = new Error('a')
    a.cause = a
    expect(unreachableCode(a)).toBeNull()
  })
})
