import mysql from 'mysql2/promise'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { runCheck } from '../../server/db/check'
import { runMigrations } from '../../server/db/migrate'
import { seedDemo } from '../../server/db/seed/index'
import { createTestDatabase, dropTestDatabase } from '../support/stack'

describe('the invariant checker', () => {
  let db: { name: string, url: string }
  let conn: mysql.Connection
  beforeAll(async () => {
    db = await createTestDatabase('inv')
    await runMigrations(db.url)
    await seedDemo(db.url)
    conn = await mysql.createConnection({ uri: db.url })
  })
  afterAll(async () => {
    await conn.end()
    await dropTestDatabase(db.name)
  })

  it('finds nothing wrong with the demo scenario', async () => {
    expect((await runCheck(db.url)).problems).toEqual([])
  })

  it('notices a lot whose cached on-hand drifts from its ledger', async () => {
    await conn.query('update lots set on_hand = on_hand + 1 where id = 1')
    const { problems } = await runCheck(db.url)
    expect(problems).toEqual([{ check: 'lot on hand equals its ledger sum', detail: expect.stringMatching(/^lot 1: on hand \d+ but the ledger sums to \d+$/) }])
    await conn.query('update lots set on_hand = on_hand - 1 where id = 1')
  })

  it('notices a reservation still held for a cancelled order, and a sealed bag not fully packed', async () => {
    const [[order]] = await conn.query<mysql.RowDataPacket[]>('select id from orders order by id limit 1')
    await conn.query('update orders set state = \'cancelled\' where id = ?', [order!.id])
    await conn.query('update bags set state = \'sealed\' where order_id = ?', [order!.id])
    const { problems } = await runCheck(db.url)
    const names = problems.map(p => p.check)
    expect(names).toContain('reservations follow their order')
    expect(names).toContain('a sealed bag is complete')
    await conn.query('update orders set state = \'paid\' where id = ?', [order!.id])
    await conn.query('update bags set state = \'open\' where order_id = ?', [order!.id])
    expect((await runCheck(db.url)).problems).toEqual([])
  })
})
