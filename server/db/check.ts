// The invariant checker any organiser can run: ./docker-less-start.sh check (exit 1 when a rule is broken).
import { drizzle } from 'drizzle-orm/mysql2'
import mysql from 'mysql2/promise'
import * as schema from './schema'
import { checkInvariants } from '../utils/invariants'

export async function runCheck(url: string) {
  const conn = await mysql.createConnection({ uri: url, timezone: 'Z' })
  try {
    return await checkInvariants(drizzle(conn, { schema, mode: 'default' }))
  }
  finally {
    await conn.end()
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const url = process.env.NUXT_DATABASE_URL
  if (!url) {
    console.error('NUXT_DATABASE_URL is not set')
    process.exit(2)
  }
  runCheck(url).then(({ checks, problems }) => {
    for (const c of checks) {
      const mine = problems.filter(p => p.check === c)
      console.log(`${mine.length ? 'BROKEN' : 'ok    '}  ${c}`)
      for (const p of mine.slice(0, 20)) console.log(`          ${p.detail}`)
    }
    console.log(problems.length ? `${problems.length} problem(s) found` : 'all rules hold')
    process.exit(problems.length ? 1 : 0)
  }, (err) => {
    console.error('check failed:', err.message)
    process.exit(2)
  })
}
