import { drizzle } from 'drizzle-orm/mysql2'
import mysql from 'mysql2/promise'
import { and, eq, sql, or, isNull, inArray } from 'drizzle-orm'
import { MySqlDialect } from 'drizzle-orm/mysql-core'
import * as schema from '../server/db/schema'
const pool = mysql.createPool({ uri: process.env.URL!, trace: false })
const db = drizzle(pool, { schema, mode: 'default' })
const d = new MySqlDialect()
const I = schema.bagItems, B = schema.bags
function time(name: string, f: (i: number) => unknown) {
  for (let r = 0; r < 2; r++) { const t = performance.now(); for (let i = 0; i < 3000; i++) f(i); if (r) console.log(name.padEnd(14), ((performance.now() - t) / 3000 * 1000).toFixed(1), 'µs') }
}
time('update item', i => db.update(I).set({ qtyPacked: sql`${I.qtyPacked} + ${i}` }).where(and(eq(I.id, i), eq(I.bagId, 3), sql`${I.qtyPacked} + ${i} <= ${I.qtyNeeded}`)).toSQL())
time('claim', i => db.update(B).set({ claimedBy: i, claimedAt: sql`now()`, state: 'packing' }).where(and(eq(B.id, i), inArray(B.state, ['open', 'packing']), or(isNull(B.claimedBy), eq(B.claimedBy, i)))).toSQL())
time('insert ev', i => db.insert(schema.bagEvents).values({ bagId: i, bagItemId: 3, kind: 'pack', lotId: 4, binId: 5, partId: 6, qty: 1, userId: 7, note: null }).toSQL())
time('lot lock', i => db.select({ onHand: schema.lots.onHand }).from(schema.lots).where(eq(schema.lots.id, i)).for('update').toSQL())
time('raw update', i => d.sqlToQuery(sql`update bag_items set qty_packed = qty_packed + ${i} where id = ${i} and bag_id = ${3} and qty_packed + ${i} <= qty_needed`))
await pool.end()
