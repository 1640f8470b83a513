import { execFileSync } from 'node:child_process'
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import mysql from 'mysql2/promise'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { runMigrations } from '../../server/db/migrate'
import { seedDemo } from '../../server/db/seed/index'
import { ROOT, createTestDatabase, dropTestDatabase } from '../support/stack'

// Back up, wipe, restore, and compare row counts and checksums of every table (MariaDB's CHECKSUM TABLE).
describe('backup and restore round trip', () => {
  let db: { name: string, url: string }
  let dir: string
  beforeAll(async () => {
    db = await createTestDatabase('backup')
    await runMigrations(db.url)
    await seedDemo(db.url)
    dir = mkdtempSync(join(tmpdir(), 'kw-backup-'))
    mkdirSync(join(dir, 'uploads/reports'), { recursive: true })
    writeFileSync(join(dir, 'uploads/reports/photo-1.jpg'), Buffer.from([0xFF, 0xD8, 0xFF, 0xE0, 1, 2, 3, 0xFF, 0xD9]))
  })
  afterAll(async () => {
    await dropTestDatabase(db.name)
    rmSync(dir, { recursive: true, force: true })
  })

  async function fingerprint() {
    const conn = await mysql.createConnection({ uri: db.url })
    const [tables] = await conn.query<mysql.RowDataPacket[]>('select table_name as t from information_schema.tables where table_schema = database() order by table_name')
    const out: Record<string, { rows: number, checksum: string }> = {}
    for (const { t } of tables) {
      const [[count]] = await conn.query<mysql.RowDataPacket[]>(`select count(*) as n from \`${t}\``)
      const [[sum]] = await conn.query<mysql.RowDataPacket[]>(`checksum table \`${t}\` extended`)
      out[t] = { rows: Number(count!.n), checksum: String(sum!.Checksum) }
    }
    await conn.end()
    return out
  }

  it('restores exactly what was backed up, database and uploads', async () => {
    const env = { ...process.env, NUXT_DATABASE_URL: db.url, NUXT_UPLOADS_DIR: join(dir, 'uploads'), KW_BACKUP_DIR: join(dir, 'backups') }
    const before = await fingerprint()
    expect(before.users!.rows).toBeGreaterThan(20)
    expect(before.ledger!.rows).toBeGreaterThan(50)
    const file = execFileSync(join(ROOT, 'server/db/backup.sh'), ['backup'], { env, encoding: 'utf8' }).trim()

    // Wipe: change and delete data, drop a table, lose the uploads.
    const conn = await mysql.createConnection({ uri: db.url })
    await conn.query('update lots set on_hand = 0')
    await conn.query('delete from ledger')
    await conn.query('set foreign_key_checks = 0')
    await conn.query('drop table bag_items')
    await conn.end()
    rmSync(join(dir, 'uploads'), { recursive: true, force: true })
    expect((await fingerprint()).ledger!.rows).toBe(0)

    execFileSync(join(ROOT, 'server/db/backup.sh'), ['restore', file], { env, encoding: 'utf8' })
    expect(await fingerprint()).toEqual(before)
    expect([...readFileSync(join(dir, 'uploads/reports/photo-1.jpg'))]).toEqual([0xFF, 0xD8, 0xFF, 0xE0, 1, 2, 3, 0xFF, 0xD9])
  })

  it('refuses a file that is not a Kitwright backup and changes nothing', async () => {
    const env = { ...process.env, NUXT_DATABASE_URL: db.url, NUXT_UPLOADS_DIR: join(dir, 'uploads'), KW_BACKUP_DIR: join(dir, 'backups') }
    const before = await fingerprint()
    const bogus = join(dir, 'bogus.tar.gz')
    execFileSync('tar', ['-czf', bogus, '-C', ROOT, 'package.json'])
    expect(() => execFileSync(join(ROOT, 'server/db/backup.sh'), ['restore', bogus], { env, stdio: 'pipe' })).toThrow(/not a Kitwright backup/)
    expect(await fingerprint()).toEqual(before)
  })
})
