// Applies the SQL migrations in drizzle/ before the app starts (never from a Nitro plugin).
import { drizzle } from 'drizzle-orm/mysql2'
import { migrate } from 'drizzle-orm/mysql2/migrator'
import mysql from 'mysql2/promise'
import { fileURLToPath } from 'node:url'

export async function runMigrations(url: string) {
  const conn = await mysql.createConnection({ uri: url, multipleStatements: true })
  try {
    await migrate(drizzle(conn), { migrationsFolder: fileURLToPath(new URL('../../drizzle', import.meta.url)) })
  }
  finally {
    await conn.end()
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const url = process.env.NUXT_DATABASE_URL
  if (!url) {
    console.error('NUXT_DATABASE_URL is not set')
    process.exit(1)
  }
  runMigrations(url).then(() => console.log('migrations applied'), (err) => {
    console.error('migration failed:', err.message)
    process.exit(1)
  })
}
