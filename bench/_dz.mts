import { drizzle } from 'drizzle-orm/mysql2'
import mysql from 'mysql2/promise'
import { and, desc, eq, ne } from 'drizzle-orm'
import * as tables from '../server/db/schema'
const pool = mysql.createPool({ uri: process.env.URL!, trace: false })
const db = drizzle(pool, { schema: tables, mode: 'default' })
const q = (userId: number) => db.select({
    order: tables.orders,
    kit: { id: tables.kits.id, name: tables.kits.name, transmits: tables.kits.transmits },
    revisionLabel: tables.revisions.label,
    day: { id: tables.buildDays.id, name: tables.buildDays.name, date: tables.buildDays.date, venue: tables.buildDays.venue },
    bag: { id: tables.bags.id, code: tables.bags.code, state: tables.bags.state, revisionId: tables.bags.revisionId, collectedAt: tables.bags.collectedAt },
  }).from(tables.orders)
    .innerJoin(tables.offerings, eq(tables.offerings.id, tables.orders.offeringId))
    .innerJoin(tables.revisions, eq(tables.revisions.id, tables.offerings.revisionId))
    .innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId))
    .innerJoin(tables.buildDays, eq(tables.buildDays.id, tables.orders.buildDayId))
    .leftJoin(tables.bags, eq(tables.bags.orderId, tables.orders.id))
    .where(and(eq(tables.orders.userId, userId), ne(tables.orders.state, 'expired')))
    .orderBy(desc(tables.orders.createdAt), desc(tables.orders.id))
for (let r = 0; r < 3; r++) {
  let t = performance.now()
  for (let i = 0; i < 2000; i++) q(i).toSQL()
  console.log('build toSQL', ((performance.now() - t) / 2000 * 1000).toFixed(0), 'µs')
  t = performance.now()
  for (let i = 0; i < 500; i++) await q(5)
  console.log('build+run', ((performance.now() - t) / 500 * 1000).toFixed(0), 'µs')
  const { sql: text, params } = q(5).toSQL()
  t = performance.now()
  for (let i = 0; i < 500; i++) await pool.query({ sql: text, rowsAsArray: true }, params)
  console.log('raw mysql2', ((performance.now() - t) / 500 * 1000).toFixed(0), 'µs')
}
await pool.end()
{
  const { sql } = await import('drizzle-orm')
  const pool2 = mysql.createPool({ uri: process.env.URL!, trace: false })
  const db2 = drizzle(pool2, { schema: tables, mode: 'default' })
  const p = db2.select({
    order: tables.orders,
    kit: { id: tables.kits.id, name: tables.kits.name, transmits: tables.kits.transmits },
    revisionLabel: tables.revisions.label,
    day: { id: tables.buildDays.id, name: tables.buildDays.name, date: tables.buildDays.date, venue: tables.buildDays.venue },
    bag: { id: tables.bags.id, code: tables.bags.code, state: tables.bags.state, revisionId: tables.bags.revisionId, collectedAt: tables.bags.collectedAt },
  }).from(tables.orders)
    .innerJoin(tables.offerings, eq(tables.offerings.id, tables.orders.offeringId))
    .innerJoin(tables.revisions, eq(tables.revisions.id, tables.offerings.revisionId))
    .innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId))
    .innerJoin(tables.buildDays, eq(tables.buildDays.id, tables.orders.buildDayId))
    .leftJoin(tables.bags, eq(tables.bags.orderId, tables.orders.id))
    .where(and(eq(tables.orders.userId, sql.placeholder('userId')), ne(tables.orders.state, 'expired')))
    .orderBy(desc(tables.orders.createdAt), desc(tables.orders.id)).prepare()
  for (let r = 0; r < 3; r++) {
    const t = performance.now()
    for (let i = 0; i < 500; i++) await p.execute({ userId: 5 })
    console.log('prepared', ((performance.now() - t) / 500 * 1000).toFixed(0), 'µs', (await p.execute({ userId: 5 })).length)
  }
  await pool2.end()
}
