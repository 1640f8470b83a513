import { randomBytes } from 'node:crypto'
import { cpSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { drizzle } from 'drizzle-orm/mysql2'
import { migrate } from 'drizzle-orm/mysql2/migrator'
import mysql from 'mysql2/promise'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { runCheck } from '../../server/db/check'
import { runMigrations } from '../../server/db/migrate'
import { Client, DEMO } from '../support/client'
import { ROOT, createTestDatabase, dropTestDatabase, startApp, type AppProcess } from '../support/stack'

// Each fixture is the demo scenario as an earlier release stored it (data only), named after the last
// migration of that release. The test applies that release's migrations, loads the data, applies every
// migration we have now, and checks the app still starts and reads it.
const FIXTURES = join(ROOT, 'tests/fixtures/upgrade')

for (const fixture of readdirSync(FIXTURES).filter(f => f.endsWith('-demo.sql'))) {
  const lastTag = fixture.replace(/-demo\.sql$/, '')
  describe(`upgrade from the release ending at migration ${lastTag}`, () => {
    let db: { name: string, url: string }
    let app: AppProcess
    let oldDir: string
    beforeAll(async () => {
      db = await createTestDatabase('upgrade')
      // The earlier release's migration set: the journal up to and including lastTag.
      oldDir = mkdtempSync(join(tmpdir(), 'kw-old-migrations-'))
      cpSync(join(ROOT, 'drizzle'), oldDir, { recursive: true })
      const journal = JSON.parse(readFileSync(join(oldDir, 'meta/_journal.json'), 'utf8'))
      const upto = journal.entries.findIndex((e: { tag: string }) => e.tag === lastTag)
      expect(upto, `${lastTag} is in drizzle/meta/_journal.json`).toBeGreaterThanOrEqual(0)
      journal.entries = journal.entries.slice(0, upto + 1)
      writeFileSync(join(oldDir, 'meta/_journal.json'), JSON.stringify(journal))
      const conn = await mysql.createConnection({ uri: db.url, multipleStatements: true })
      await migrate(drizzle(conn), { migrationsFolder: oldDir })
      await conn.query(readFileSync(join(FIXTURES, fixture), 'utf8'))
      await conn.end()
    })
    afterAll(async () => {
      await app?.stop()
      rmSync(oldDir, { recursive: true, force: true })
      await dropTestDatabase(db.name)
    })

    it('applies every newer migration over the old data', async () => {
      await runMigrations(db.url)
      const conn = await mysql.createConnection({ uri: db.url })
      const [[applied]] = await conn.query<mysql.RowDataPacket[]>('select count(*) as n from __drizzle_migrations')
      const journal = JSON.parse(readFileSync(join(ROOT, 'drizzle/meta/_journal.json'), 'utf8'))
      expect(Number(applied!.n)).toBe(journal.entries.length)
      await conn.end()
    })

    it('the app starts on the upgraded database and reads the old data', async () => {
      app = await startApp({ NUXT_DATABASE_URL: db.url, NUXT_SESSION_PASSWORD: randomBytes(24).toString('hex'), NUXT_LABEL_SECRET: 'upgrade-test-secret' })
      const org = await new Client(app.url).login(DEMO.organiser)
      const overview = await org.get('/api/overview')
      expect(overview.status).toBe(200)
      expect(overview.body.counts).toMatchObject({ kits: 3, paidOrders: 12, bags: 12 })
      expect((await org.get('/api/users')).body.length).toBe(25)
      await new Client(app.url).login(DEMO.builder)
    })

    it('the old data still satisfies every invariant', async () => {
      expect((await runCheck(db.url)).problems).toEqual([])
    })
  })
}
